export function PageHeader({ title, eyebrow, children }: { title: string; eyebrow?: string; children?: React.ReactNode }) {
  return (
    <header className="mb-8 border-b border-ink-100 pb-6">
      {eyebrow ? <p className="text-xs font-semibold uppercase tracking-wider text-ochre-700">{eyebrow}</p> : null}
      <h1 className="mt-1 text-2xl font-semibold text-ink">{title}</h1>
      {children ? <div className="mt-2 max-w-3xl text-ink-500">{children}</div> : null}
    </header>
  );
}
