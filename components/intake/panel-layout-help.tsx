import { Panel } from "./format";

// The words follow docs/file-formats.md ("Indicator panels"); change both together.

const LONG_EXAMPLE = `region,period,indicator,value
VM-001,2022,unemployment_rate,6.8
VM-002,2022,unemployment_rate,11.4`;

const WIDE_EXAMPLE = `region;year;unemployment_rate;median_household_income
VM-001;2022;6,8;31.250
VM-002;2022;11,4;24.880`;

const WIDE_PERIOD_EXAMPLE = `region,unemployment_rate_2022,unemployment_rate_2023
VM-001,6.8,6.1
VM-002,11.4,NA`;

function Example({ title, children, code }: { title: string; children: React.ReactNode; code: string }) {
  return (
    <div>
      <h4 className="text-sm font-semibold text-ink">{title}</h4>
      <p className="text-sm text-ink-600">{children}</p>
      <pre tabIndex={0} aria-label={`${title}: example`} className="mt-1 overflow-x-auto rounded-md bg-ink-50 px-3 py-2 font-mono text-xs text-ink-800">{code}</pre>
    </div>
  );
}

/**
 * How to lay out a panel, before the first upload: open while the workspace
 * has no panel, one click away (a closed <details>) once it has.
 */
export function PanelLayoutHelp({ open }: { open: boolean }) {
  return (
    <Panel title="How to lay out a panel" caption="One CSV file with the values of one or more indicators for regions and periods, checked against a boundary version.">
      <details open={open} data-testid="panel-layout-help" className="group">
        <summary className="cursor-pointer text-sm font-medium text-ochre-700">{open ? "Layouts, separators, codes and missing values" : "Show how to lay out a panel"}</summary>
        <div className="mt-3 space-y-4">
          <Example title="Long" code={LONG_EXAMPLE}>
            One observation per row, four columns: region, period, indicator, value.
          </Example>
          <Example title="Wide" code={WIDE_EXAMPLE}>
            One row per region and period, one column per indicator; the column header is the indicator&apos;s code.
          </Example>
          <Example title="Wide by period" code={WIDE_PERIOD_EXAMPLE}>
            One row per region, the periods in the column headers (<code>unemployment_rate_2022</code>, <code>2022 unemployment_rate</code>). With a single indicator the headers
            may be periods only (<code>region,2022,2023</code>); you then give the indicator&apos;s code.
          </Example>
          <ul className="list-disc space-y-1 pl-5 text-sm text-ink-700">
            <li>
              <strong>Separators:</strong> comma, semicolon or tab, detected from the first lines. Quoted fields may contain the separator.
            </li>
            <li>
              <strong>Decimal commas:</strong> choose the decimal mark (point or comma) when you upload; it is never guessed cell by cell. With a decimal comma, separate fields with a
              semicolon or tab. Thousands separators only in groups of three (<code>31.250</code> with a decimal comma). Give <code>12.5</code>, not <code>12.5 %</code>.
            </li>
            <li>
              <strong>Region codes</strong> are text and compared exactly: <code>007</code> and <code>7</code> are different codes. Spreadsheets drop leading zeros; format the
              column as text before saving, or quote the codes. The report suggests the padded code when it is a region.
            </li>
            <li>
              <strong>Periods:</strong> one granularity per panel: years (<code>2019</code>), quarters (<code>2019-Q3</code>, <code>Q3 2019</code>) or months (
              <code>2019-07</code>, <code>2019M07</code>).
            </li>
            <li>
              <strong>Missing values</strong> are counted per indicator and never read as zero: leave the cell empty or write <code>NA</code>, <code>n.a.</code>, <code>..</code>,{" "}
              <code>-</code> (and a few other common marks).
            </li>
            <li>
              <strong>Encoding:</strong> UTF-8 (&quot;CSV UTF-8&quot; in spreadsheets).
            </li>
          </ul>
          <p className="text-sm text-ink-700">
            Example files:{" "}
            <a className="font-medium text-ochre-700 underline-offset-2 hover:underline" href="/examples/panel-long.csv" download data-testid="example-long">
              panel-long.csv
            </a>{" "}
            (long, comma-separated) and{" "}
            <a className="font-medium text-ochre-700 underline-offset-2 hover:underline" href="/examples/panel-wide.csv" download data-testid="example-wide">
              panel-wide.csv
            </a>{" "}
            (wide, semicolons and decimal commas).
          </p>
        </div>
      </details>
    </Panel>
  );
}
