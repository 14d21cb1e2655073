// Local S3 API (s3rver) — run as a child process by start.mjs / test.mjs:
//   node scripts/services/s3-server.mjs
// Reads S3_PORT, S3_BUCKET, S3_DIR and S3_CORS_ORIGINS (comma separated) from the
// environment. Creates the bucket with a CORS rule so browsers can PUT/GET
// through presigned URLs from the app's origin.
import fs from "node:fs";
import S3rver from "s3rver";

const HOST = "127.0.0.1";
const port = Number(process.env.S3_PORT);
const bucket = process.env.S3_BUCKET;
const directory = process.env.S3_DIR;
const origins = (process.env.S3_CORS_ORIGINS ?? "").split(",").map((s) => s.trim()).filter(Boolean);

function die(message) {
  process.stderr.write(`s3rver: ${message}\n`);
  process.exit(1);
}
if (!Number.isInteger(port) || port <= 0) die(`S3_PORT is not a port number: ${process.env.S3_PORT}`);
if (!bucket || !/^[a-z0-9][a-z0-9.-]{1,61}[a-z0-9]$/.test(bucket)) die(`S3_BUCKET is not a valid bucket name: ${bucket}`);
if (!directory) die("S3_DIR (where objects are stored) is not set");
fs.mkdirSync(directory, { recursive: true });

const escapeXml = (s) => s.replace(/[<>&'"]/g, (c) => ({ "<": "&lt;", ">": "&gt;", "&": "&amp;", "'": "&apos;", '"': "&quot;" })[c]);
const cors = `<?xml version="1.0" encoding="UTF-8"?>
<CORSConfiguration xmlns="http://s3.amazonaws.com/doc/2006-03-01/">
  <CORSRule>
${origins.map((o) => `    <AllowedOrigin>${escapeXml(o)}</AllowedOrigin>`).join("\n")}
    <AllowedMethod>GET</AllowedMethod>
    <AllowedMethod>PUT</AllowedMethod>
    <AllowedMethod>HEAD</AllowedMethod>
    <AllowedHeader>*</AllowedHeader>
    <ExposeHeader>ETag</ExposeHeader>
    <MaxAgeSeconds>3000</MaxAgeSeconds>
  </CORSRule>
</CORSConfiguration>`;

const server = new S3rver({
  address: HOST,
  port,
  directory,
  silent: true,
  configureBuckets: [{ name: bucket, configs: origins.length ? [cors] : [] }],
});

try {
  await server.run();
} catch (err) {
  die(`could not listen on ${HOST}:${port} (S3_PORT): ${err.message}`);
}
process.stdout.write(`listening on http://${HOST}:${port}, bucket ${bucket}, CORS for ${origins.join(", ") || "(none)"}, files in ${directory}\n`);

let closing = false;
async function shutdown() {
  if (closing) return;
  closing = true;
  try {
    await server.close();
  } finally {
    process.exit(0);
  }
}
process.on("SIGTERM", shutdown);
process.on("SIGINT", shutdown);
// Started with an IPC channel: exit when the parent goes away.
process.on("disconnect", shutdown);
