// Where the links in invoice and receipt e-mails point: the release page,
// where the client sees the invoice and pays. TIDEMARK_PUBLIC_URL is the
// address clients reach the app at (a loopback default for development).

export function publicAppUrl(env: Record<string, string | undefined> = process.env): string {
  const url = env.TIDEMARK_PUBLIC_URL ?? "http://127.0.0.1:3000";
  if (!/^https?:\/\//.test(url)) throw new Error(`TIDEMARK_PUBLIC_URL must be an http(s) address, not ${url}`);
  return url.replace(/\/+$/, "");
}

export const releaseInvoiceLink = (appUrl: string, releaseId: string): string => `${appUrl}/releases/${releaseId}#invoice`;
