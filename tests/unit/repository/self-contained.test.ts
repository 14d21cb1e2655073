import { execFileSync } from "node:child_process";
import { readFileSync } from "node:fs";
import path from "node:path";

// The repository must explain itself: no file may send a reader to documents
// that are not in it (the team's design notes live outside the repository).
// The names are assembled here so that this file does not match itself.

const root = path.join(__dirname, "..", "..", "..");
const OUTSIDE = [["DESIGN", ".md"], ["STYLE", ".md"], ["..", "/shared"], ["DESIGN", " §"]].map(([a, b]) => `${a}${b}`);
const TEXT = /\.(ts|tsx|mjs|cjs|js|json|md|sh|R|css|ya?ml|sql|txt|csv)$|(^|\/)(README|DEVELOPERS|Dockerfile|run)$/;

function trackedTextFiles(): string[] {
  return execFileSync("git", ["ls-files", "-z"], { cwd: root, encoding: "utf8" })
    .split("\0")
    .filter((file) => file !== "" && TEXT.test(file) && !file.endsWith("package-lock.json"));
}

describe("the repository is self-contained", () => {
  it("finds the README, the docs and the sources among the files it checks", () => {
    const files = trackedTextFiles();
    expect(files).toEqual(expect.arrayContaining(["README.md", "DEVELOPERS.md", "docs/guarantees.md", "lib/runs/label.ts", ".ci/run"]));
  });

  it("no tracked file refers to design or style notes outside the repository", () => {
    const offending: string[] = [];
    for (const file of trackedTextFiles()) {
      const text = readFileSync(path.join(root, file), "utf8");
      text.split("\n").forEach((line, i) => {
        for (const needle of OUTSIDE) if (line.includes(needle)) offending.push(`${file}:${i + 1}: ${needle}`);
      });
    }
    expect(offending).toEqual([]);
  });
});
