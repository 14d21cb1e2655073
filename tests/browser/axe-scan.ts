import AxeBuilder from "@axe-core/playwright";
import type { Page } from "playwright-core";

/** The WCAG 2.1 A and AA rule tags every screen is held to (docs/accessibility.md). */
export const WCAG_TAGS = ["wcag2a", "wcag2aa", "wcag21a", "wcag21aa"] as const;

export type AxeFinding = { screen: string; rule: string; impact: string | null; help: string; targets: string[] };

/**
 * Runs axe-core (the copy in node_modules, injected by @axe-core/playwright; nothing is
 * downloaded) on the page as it is now and returns its violations at the WCAG 2.1 A/AA
 * tags, one finding per rule with the first few offending elements named.
 */
export async function axeScan(page: Page, screen: string): Promise<AxeFinding[]> {
  // The app's fonts and charts settle before the scan, so colour-contrast sees the final page.
  await page.waitForLoadState("load");
  const results = await new AxeBuilder({ page }).withTags([...WCAG_TAGS]).analyze();
  return results.violations.map((v) => ({
    screen,
    rule: v.id,
    impact: v.impact ?? null,
    help: v.help,
    targets: v.nodes.slice(0, 5).map((n) => `${n.target.join(" ")}${n.failureSummary ? ` — ${n.failureSummary.replace(/\s+/g, " ").slice(0, 200)}` : ""}`),
  }));
}

/** One readable line per finding, for a failing expectation's message. */
export function describeFindings(findings: AxeFinding[]): string {
  return findings.map((f) => `[${f.screen}] ${f.rule} (${f.impact ?? "?"}): ${f.help}\n    ${f.targets.join("\n    ")}`).join("\n");
}
