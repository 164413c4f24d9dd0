/** Calls to the glowprint server's JSON API (same origin); errors carry the server's message. */
export async function apiJson(path: string, init: { method?: string; body?: unknown; form?: FormData } = {}): Promise<unknown> {
  const headers: Record<string, string> = { accept: 'application/json' };
  let body: BodyInit | undefined;
  if (init.form) body = init.form;
  else if (init.body !== undefined) {
    headers['content-type'] = 'application/json';
    body = JSON.stringify(init.body);
  }
  let res: Response;
  try {
    res = await fetch(path, { method: init.method ?? (body ? 'POST' : 'GET'), headers, body });
  } catch {
    throw new Error(`the glowprint server does not answer (${path}); is \`glowprint serve\` still running?`);
  }
  const text = await res.text();
  let json: unknown = null;
  try {
    json = text ? JSON.parse(text) : null;
  } catch {
    throw new Error(`${path}: the server sent something that is not JSON (HTTP ${res.status})`);
  }
  if (!res.ok) {
    const msg = (json as { error?: string } | null)?.error ?? `HTTP ${res.status}`;
    throw new Error(msg);
  }
  return json;
}
