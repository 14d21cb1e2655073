export default function Home() {
  return (
    <main className="mx-auto max-w-3xl p-8">
      <h1 className="text-2xl font-semibold text-ink">Tessera</h1>
      <p className="mt-2 text-ink-600">A data room for regional economists.</p>
    </main>
  );
}
