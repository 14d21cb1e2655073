import type { BrowserContext, ConsoleMessage, Page } from "playwright-core";

// What the security browser tests listen for while they walk through screens:
// Content-Security-Policy violations (the DOM event in every frame, and the
// console errors browsers log for them), and JavaScript dialogs. Each finding
// is tagged with the screen being looked at.

export type Finding = { screen: string; what: string };

export interface SecurityWatch {
  /** CSP violation events and CSP console errors. */
  violations: Finding[];
  /** alert/confirm/prompt dialogs (dismissed at once). */
  dialogs: Finding[];
  /** Names the screen that following findings belong to. */
  at(screen: string): void;
  /** Throws listing every finding so far, if any, and starts the lists afresh. */
  assertClean(): void;
}

export async function watchSecurity(context: BrowserContext, page: Page): Promise<SecurityWatch> {
  const violations: Finding[] = [];
  const dialogs: Finding[] = [];
  let screen = "(start)";
  await context.exposeFunction("__tesseraCspViolation", (what: string) => violations.push({ screen, what }));
  // Init scripts are injected through the browser's debugging protocol, so the policy does not block this one.
  await context.addInitScript(() => {
    document.addEventListener(
      "securitypolicyviolation",
      (e) => {
        const report = (window as unknown as { __tesseraCspViolation?: (s: string) => void }).__tesseraCspViolation;
        report?.(`${e.effectiveDirective} blocked ${e.blockedURI || "(inline)"} at ${e.sourceFile}:${e.lineNumber} sample=${JSON.stringify(e.sample)}`);
      },
      true,
    );
  });
  page.on("console", (msg: ConsoleMessage) => {
    if (/Content Security Policy|Refused to (execute|load|apply|connect|frame|evaluate|run)/i.test(msg.text())) violations.push({ screen, what: `console ${msg.type()}: ${msg.text()}` });
  });
  page.on("dialog", (dialog) => {
    dialogs.push({ screen, what: `${dialog.type()}: ${dialog.message()}` });
    void dialog.dismiss().catch(() => undefined);
  });
  return {
    violations,
    dialogs,
    at(name: string) {
      screen = name;
    },
    assertClean() {
      const lines = [...violations.map((v) => `  CSP [${v.screen}] ${v.what}`), ...dialogs.map((d) => `  dialog [${d.screen}] ${d.what}`)];
      violations.length = 0;
      dialogs.length = 0;
      if (lines.length) throw new Error(`Security findings:\n${lines.join("\n")}`);
    },
  };
}
