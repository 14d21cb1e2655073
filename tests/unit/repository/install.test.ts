import { execFileSync, spawnSync } from "node:child_process";
import { readFileSync } from "node:fs";
import path from "node:path";

// A newcomer's `npm ci` must not print warnings that look like trouble:
// no peer-dependency conflicts (ESLint's major version is the one
// eslint-config-next's plugins accept) and no dependency install scripts left
// undecided (they are denied on purpose: nothing downloads or builds binaries
// at install time).

const root = path.join(__dirname, "..", "..", "..");

describe("installing the dependencies", () => {
  it("leaves npm with no problem to report: no invalid peer, missing or extraneous package", () => {
    const ls = spawnSync("npm", ["ls", "--all", "--json"], { cwd: root, encoding: "utf8", maxBuffer: 64 * 1024 * 1024 });
    const tree = JSON.parse(ls.stdout) as { problems?: string[]; dependencies?: Record<string, unknown> };
    expect(Object.keys(tree.dependencies ?? {})).toEqual(expect.arrayContaining(["next", "eslint", "eslint-config-next"]));
    expect(tree.problems ?? []).toEqual([]);
    expect(ls.status).toBe(0);
  });

  it("has decided about every dependency's install script, so npm does not warn about unreviewed ones", () => {
    const out = execFileSync("npm", ["install-scripts", "ls"], { cwd: root, encoding: "utf8" });
    const pkg = JSON.parse(readFileSync(path.join(root, "package.json"), "utf8")) as { allowScripts?: Record<string, boolean> };
    expect(pkg.allowScripts).toEqual(expect.objectContaining({ esbuild: false }));
    expect(out).not.toMatch(/not yet covered|@\d+\.\d+/);
  });
});
