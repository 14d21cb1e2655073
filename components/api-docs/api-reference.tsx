import { ERROR_MEANINGS } from "@/lib/api-docs/define";
import { fieldsOf, notesOf, resolve, typeOf, type FieldRow, type JsonSchema } from "./schema-fields";

// The API reference: the OpenAPI document (lib/api-docs, served at
// /api/openapi.json) rendered by area, each route with its method, path,
// who may call it, parameters, body fields and answers. A server component:
// plain HTML, nothing to run in the browser.

type Parameter = { name: string; in: string; required?: boolean; description?: string; schema?: JsonSchema };
type Media = Record<string, { schema?: JsonSchema }>;
type Operation = {
  operationId: string;
  tags?: string[];
  summary?: string;
  description?: string;
  parameters?: Parameter[];
  requestBody?: { content: Media };
  responses: Record<string, { description: string; content?: Media }>;
  security?: Record<string, string[]>[];
  "x-tessera-access"?: { kind: "member" | "signed-in" | "public"; capability?: string; roles?: string[]; sessionOnly?: boolean; rule?: string };
};
export type ReferenceDocument = {
  info: { title: string; version: string; description?: string };
  tags?: { name: string; description?: string }[];
  paths?: Record<string, Record<string, Operation>>;
  components?: { schemas?: Record<string, JsonSchema>; securitySchemes?: Record<string, { type: string; description?: string }> };
};

const METHOD_STYLES: Record<string, string> = {
  GET: "bg-ink-700 text-white",
  POST: "bg-ochre-700 text-white",
  PUT: "bg-ochre-800 text-white",
  PATCH: "bg-ochre-800 text-white",
  DELETE: "bg-red-800 text-white",
};

const ROLE_NAMES: Record<string, string> = { manager: "Manager", steward: "Data steward", economist: "Economist", subscriber: "Subscriber" };

type Entry = { method: string; path: string; op: Operation };

function entriesByTag(doc: ReferenceDocument): { name: string; description?: string; entries: Entry[] }[] {
  const entries: Entry[] = Object.entries(doc.paths ?? {}).flatMap(([path, item]) => Object.entries(item).map(([method, op]) => ({ method: method.toUpperCase(), path, op })));
  return (doc.tags ?? []).map((tag) => ({ ...tag, entries: entries.filter((e) => e.op.tags?.[0] === tag.name) })).filter((t) => t.entries.length > 0);
}

/** Descriptions are Markdown in the document; here plain text (code spans lose their backticks). */
function plain(text: string | undefined | null): string {
  return (text ?? "").replace(/\*\*([^*]+)\*\*/g, "$1").replace(/`([^`]+)`/g, "$1");
}

function anchorOf(name: string): string {
  return `area-${name.toLowerCase().replace(/[^a-z0-9]+/g, "-").replace(/^-|-$/g, "")}`;
}

function MethodBadge({ method }: { method: string }) {
  return <span className={`inline-block w-16 rounded px-2 py-0.5 text-center font-mono text-xs font-semibold ${METHOD_STYLES[method] ?? "bg-ink text-white"}`}>{method}</span>;
}

function Access({ op }: { op: Operation }) {
  const access = op["x-tessera-access"];
  if (!access) return null;
  if (access.kind === "public") return <p className="text-sm text-ink-600"><span className="font-semibold text-ink">Public.</span> {access.rule}</p>;
  if (access.kind === "signed-in") return <p className="text-sm text-ink-600"><span className="font-semibold text-ink">Any signed-in user</span>{access.rule ? `: ${access.rule}` : "."} Session only.</p>;
  return (
    <p className="text-sm text-ink-600">
      <span className="font-semibold text-ink">Roles:</span>{" "}
      {(access.roles ?? []).map((role) => (
        <span key={role} className="mr-1 inline-block rounded-full border border-ochre-300 bg-ochre-50 px-2 py-0.5 text-xs font-medium text-ochre-900">
          {ROLE_NAMES[role] ?? role}
        </span>
      ))}
      <span className="ml-1 text-xs text-ink-500">({access.capability}; {access.sessionOnly ? "session only" : "session or API token"})</span>
    </p>
  );
}

function FieldTable({ caption, rows }: { caption: string; rows: FieldRow[] }) {
  if (rows.length === 0) return null;
  return (
    <table className="mt-2 w-full text-left text-sm">
      <caption className="mb-1 text-left text-xs font-semibold uppercase tracking-wider text-ochre-700">{caption}</caption>
      <thead className="border-b border-ink-100 text-xs text-ink-500">
        <tr>
          <th scope="col" className="py-1 pr-3 font-medium">Name</th>
          <th scope="col" className="py-1 pr-3 font-medium">Type</th>
          <th scope="col" className="py-1 font-medium">Notes</th>
        </tr>
      </thead>
      <tbody>
        {rows.map((row) => (
          <tr key={row.name} className="border-b border-ink-50 align-top">
            <td className="py-1 pr-3 font-mono text-xs text-ink">
              {row.name}
              {row.required ? <span className="ml-1 font-sans text-[0.7rem] font-semibold text-ochre-800">required</span> : null}
            </td>
            <td className="py-1 pr-3 text-xs text-ink-600">{row.type}</td>
            <td className="py-1 text-xs text-ink-600">{[plain(row.description), ...row.notes].filter(Boolean).join(" · ")}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

function parameterRows(op: Operation, schemas: Record<string, JsonSchema>): FieldRow[] {
  return (op.parameters ?? []).map((p) => {
    const schema = p.schema ?? {};
    return { name: `${p.name} (${p.in})`, type: typeOf(schema, schemas), required: Boolean(p.required), notes: notesOf(schema), description: p.description ?? schema.description ?? null };
  });
}

/** An error answer whose description is the shared meaning of its status (listed once, under "Signing in and errors"). */
function isUsualError(status: string, description: string): boolean {
  return (ERROR_MEANINGS as Record<string, string>)[status] === description;
}

function Answers({ op, schemas }: { op: Operation; schemas: Record<string, JsonSchema> }) {
  const all = Object.keys(op.responses).sort();
  const usual = all.filter((status) => isUsualError(status, op.responses[status].description));
  const statuses = all.filter((status) => !usual.includes(status));
  return (
    <div className="mt-3">
      <h4 className="text-xs font-semibold uppercase tracking-wider text-ochre-700">Answers</h4>
      <dl className="mt-1 space-y-1 text-sm">
        {statuses.map((status) => {
          const answer = op.responses[status];
          const types = Object.keys(answer.content ?? {});
          const json = answer.content?.["application/json"]?.schema;
          const resolved = json ? resolve(json, schemas) : null;
          const fields = resolved?.properties ? Object.keys(resolved.properties) : [];
          const ok = status.startsWith("2");
          return (
            <div key={status} className="flex gap-3">
              <dt className={`w-10 shrink-0 font-mono text-xs font-semibold ${ok ? "text-cluster-ll" : "text-ink-700"}`}>{status}</dt>
              <dd className="text-xs text-ink-600">
                {plain(answer.description)}
                {types.length > 0 && !(types.length === 1 && types[0] === "application/json") ? <span className="ml-1 text-ink-500">({types.join(", ")})</span> : null}
                {ok && fields.length > 0 ? (
                  <span className="ml-1 text-ink-500">
                    Fields: <span className="font-mono">{fields.join(", ")}</span>
                  </span>
                ) : null}
                {!ok && json ? <span className="ml-1 font-mono text-ink-400">{typeOf(json, schemas)}</span> : null}
              </dd>
            </div>
          );
        })}
        {usual.length > 0 ? (
          <div className="flex gap-3">
            <dt className="w-10 shrink-0 font-mono text-xs font-semibold text-ink-700">also</dt>
            <dd className="text-xs text-ink-600">
              <span className="font-mono">{usual.join(" · ")}</span> as usual (ErrorBody)
            </dd>
          </div>
        ) : null}
      </dl>
    </div>
  );
}

function RouteCard({ entry, schemas }: { entry: Entry; schemas: Record<string, JsonSchema> }) {
  const { op } = entry;
  const bodyType = Object.keys(op.requestBody?.content ?? {})[0];
  const body = bodyType ? op.requestBody?.content[bodyType]?.schema : undefined;
  const description = op.description?.split("\n\n**Who may call it.**")[0];
  return (
    <article id={op.operationId} className="rounded-lg border border-ink-100 bg-white p-4 shadow-sm" data-testid="api-route" data-method={entry.method} data-path={entry.path}>
      <h3 className="flex flex-wrap items-center gap-3">
        <MethodBadge method={entry.method} />
        <code className="break-all font-mono text-sm font-semibold text-ink">{entry.path}</code>
      </h3>
      <p className="mt-2 text-sm font-medium text-ink">{op.summary}</p>
      {description && !description.startsWith("**Who") ? <p className="mt-1 text-sm text-ink-600">{plain(description)}</p> : null}
      <div className="mt-2">
        <Access op={op} />
      </div>
      <FieldTable caption="Parameters" rows={parameterRows(op, schemas)} />
      {body ? <FieldTable caption={`Body (${bodyType})`} rows={fieldsOf(body, schemas)} /> : null}
      <Answers op={op} schemas={schemas} />
    </article>
  );
}

export function ApiReference({ document }: { document: ReferenceDocument }) {
  const schemas = document.components?.schemas ?? {};
  const groups = entriesByTag(document);
  const schemes = document.components?.securitySchemes ?? {};
  return (
    <div className="lg:grid lg:grid-cols-[14rem_1fr] lg:gap-8">
      <nav aria-label="API areas" className="mb-6 lg:sticky lg:top-6 lg:self-start">
        <ul className="space-y-1 text-sm">
          {groups.map((g) => (
            <li key={g.name}>
              <a href={`#${anchorOf(g.name)}`} className="text-ink-700 hover:text-ochre-700 hover:underline">
                {g.name} <span className="text-ink-400">({g.entries.length})</span>
              </a>
            </li>
          ))}
        </ul>
      </nav>
      <div>
        <section aria-labelledby="api-auth" className="mb-8 rounded-lg border border-ochre-200 bg-ochre-50 p-4">
          <h2 id="api-auth" className="text-base font-semibold text-ink">Signing in and errors</h2>
          <ul className="mt-2 space-y-1 text-sm text-ink-700">
            {Object.entries(schemes).map(([name, scheme]) => (
              <li key={name}>
                <span className="font-mono text-xs font-semibold">{name}</span>: {plain(scheme.description)}
              </li>
            ))}
          </ul>
          <p className="mt-2 text-sm text-ink-700">
            Every error answers one JSON shape: <code className="font-mono text-xs">{"{ error, field?, issues?, retryable? }"}</code>. The machine-readable
            document is at{" "}
            <a href="/api/openapi.json" className="font-medium text-ochre-800 underline">
              /api/openapi.json
            </a>{" "}
            (OpenAPI {"3.1"}, version {document.info.version}). The usual errors of a route:
          </p>
          <dl className="mt-2 space-y-0.5 text-sm text-ink-700" data-testid="usual-errors">
            {Object.entries(ERROR_MEANINGS).map(([status, meaning]) => (
              <div key={status} className="flex gap-3">
                <dt className="w-10 shrink-0 font-mono text-xs font-semibold">{status}</dt>
                <dd className="text-xs">{plain(meaning)}</dd>
              </div>
            ))}
          </dl>
        </section>
        {groups.map((g) => (
          <section key={g.name} aria-labelledby={anchorOf(g.name)} className="mb-10">
            <h2 id={anchorOf(g.name)} className="text-lg font-semibold text-ink">
              {g.name}
            </h2>
            {g.description ? <p className="mt-1 text-sm text-ink-500">{plain(g.description)}</p> : null}
            <div className="mt-4 space-y-4">
              {g.entries.map((entry) => (
                <RouteCard key={`${entry.method} ${entry.path}`} entry={entry} schemas={schemas} />
              ))}
            </div>
          </section>
        ))}
      </div>
    </div>
  );
}
