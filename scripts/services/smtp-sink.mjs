// Local SMTP sink — run as a child process by start.mjs / test.mjs:
//   node scripts/services/smtp-sink.mjs
// Accepts every message on 127.0.0.1:SMTP_PORT (no auth required, no STARTTLS),
// parses it with mailparser and stores it in PostgreSQL table outbox_messages
// (DATABASE_URL). Nothing leaves the machine. The table comes from the migration
// 20261201000100-create-outbox-messages.js; until it exists, messages are
// refused with a temporary error so the sender can retry.
import { simpleParser } from "mailparser";
import pg from "pg";
import { SMTPServer } from "smtp-server";

const HOST = "127.0.0.1";
const port = Number(process.env.SMTP_PORT);
const databaseUrl = process.env.DATABASE_URL;
const MAX_BYTES = 25 * 1024 * 1024;

function die(message) {
  process.stderr.write(`smtp-sink: ${message}\n`);
  process.exit(1);
}
if (!Number.isInteger(port) || port <= 0) die(`SMTP_PORT is not a port number: ${process.env.SMTP_PORT}`);
if (!databaseUrl) die("DATABASE_URL is not set");

const pool = new pg.Pool({ connectionString: databaseUrl, max: 4, idleTimeoutMillis: 10_000 });
pool.on("error", (err) => process.stderr.write(`smtp-sink: database pool error: ${err.message}\n`));

function addressList(value) {
  if (!value) return [];
  const groups = Array.isArray(value) ? value : [value];
  return groups.flatMap((g) => g.value ?? []).map((a) => a.address?.toLowerCase()).filter(Boolean);
}

function headersObject(headerLines) {
  const out = {};
  for (const { key, line } of headerLines ?? []) {
    const value = line.slice(line.indexOf(":") + 1).trim();
    if (key in out) out[key] = Array.isArray(out[key]) ? [...out[key], value] : [out[key], value];
    else out[key] = value;
  }
  return out;
}

// lib/mail/send.ts names the workspace a mail belongs to in this header; the
// Outbox page of a workspace lists only its own mail. Anything but one plain
// positive integer (absent, repeated, garbled) stores NULL: shown nowhere.
const WORKSPACE_HEADER = "x-tessera-workspace";
function workspaceIdOf(parsed) {
  const value = parsed.headers.get(WORKSPACE_HEADER);
  if (typeof value !== "string" || !/^[1-9][0-9]{0,9}$/.test(value.trim())) return null;
  const id = Number(value.trim());
  return id <= 2_147_483_647 ? id : null;
}

async function store(raw, session) {
  const parsed = await simpleParser(raw, { skipImageLinks: true, skipTextToHtml: true });
  const envelopeTo = (session.envelope.rcptTo ?? []).map((r) => r.address.toLowerCase());
  // Envelope recipients include Bcc; fall back to the headers when there is no envelope.
  const to = envelopeTo.length ? envelopeTo : [...addressList(parsed.to), ...addressList(parsed.cc)];
  const from = parsed.from?.text || session.envelope.mailFrom?.address || "";
  const { rows } = await pool.query(
    `INSERT INTO outbox_messages (message_id, "from", "to", subject, text, html, headers, raw, workspace_id, received_at)
     VALUES ($1, $2, $3, $4, $5, $6, $7, $8, (SELECT id FROM workspaces WHERE id = $9), now()) RETURNING id`,
    [
      parsed.messageId ?? null,
      from,
      to,
      parsed.subject ?? "",
      parsed.text ?? null,
      typeof parsed.html === "string" ? parsed.html : null,
      JSON.stringify(headersObject(parsed.headerLines)),
      raw.toString("utf8"),
      workspaceIdOf(parsed),
    ],
  );
  return { id: rows[0].id, to, subject: parsed.subject ?? "" };
}

const server = new SMTPServer({
  name: "tessera-smtp-sink",
  banner: "Tessera local mail sink: messages are stored, never delivered",
  authOptional: true,
  disabledCommands: ["STARTTLS"],
  // Any credentials are accepted, so a sender configured for a real server still works here.
  allowInsecureAuth: true,
  onAuth(auth, _session, callback) {
    callback(null, { user: auth.username || "anonymous" });
  },
  hideSTARTTLS: true,
  secure: false,
  size: MAX_BYTES,
  logger: false,
  onData(stream, session, callback) {
    const chunks = [];
    let length = 0;
    stream.on("data", (chunk) => {
      length += chunk.length;
      if (length <= MAX_BYTES) chunks.push(chunk);
    });
    stream.on("error", (err) => callback(err));
    stream.on("end", () => {
      if (stream.sizeExceeded) {
        const err = new Error(`Message exceeds ${MAX_BYTES} bytes`);
        err.responseCode = 552;
        return callback(err);
      }
      store(Buffer.concat(chunks), session).then(
        (saved) => {
          process.stdout.write(`captured #${saved.id} to ${saved.to.join(", ")}: ${saved.subject}\n`);
          callback(null, `Stored as #${saved.id}`);
        },
        (err) => {
          process.stderr.write(`smtp-sink: could not store a message: ${err.message}\n`);
          const reply = new Error(err.code === "42P01" ? "Outbox table missing (run the migrations); try again later" : "Could not store the message; try again later");
          reply.responseCode = 451;
          callback(reply);
        },
      );
    });
  },
});

server.on("error", (err) => process.stderr.write(`smtp-sink: ${err.message}\n`));
server.listen(port, HOST, () => process.stdout.write(`listening on smtp://${HOST}:${port}, storing messages in outbox_messages\n`));

let closing = false;
function shutdown() {
  if (closing) return;
  closing = true;
  server.close(() => {
    pool.end().finally(() => process.exit(0));
  });
  setTimeout(() => process.exit(0), 5_000).unref();
}
process.on("SIGTERM", shutdown);
process.on("SIGINT", shutdown);
process.on("disconnect", shutdown);
