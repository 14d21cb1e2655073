/**
 * Polls `probe` until it returns a value other than null/undefined/false, or
 * throws after timeoutMs with `what` in the message.
 */
export async function waitFor<T>(what: string, probe: () => Promise<T | null | undefined | false>, options: { timeoutMs?: number; intervalMs?: number } = {}): Promise<T> {
  const timeoutMs = options.timeoutMs ?? 15_000;
  const intervalMs = options.intervalMs ?? 200;
  const deadline = Date.now() + timeoutMs;
  let lastError: unknown;
  for (;;) {
    try {
      const value = await probe();
      if (value !== null && value !== undefined && value !== false) return value;
    } catch (err) {
      lastError = err;
    }
    if (Date.now() > deadline) {
      const reason = lastError instanceof Error ? ` (last error: ${lastError.message})` : "";
      throw new Error(`Timed out after ${timeoutMs} ms waiting for ${what}${reason}`);
    }
    await new Promise((resolve) => setTimeout(resolve, intervalMs));
  }
}
