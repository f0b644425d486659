// Where to go after sign-in: only a path on our own origin. The value is
// parsed as a URL against a stand-in origin (what the browser will do with it)
// and must stay there; control characters, which browsers strip
// ("/\t/evil.example" becomes "//evil.example"), and backslashes, which they
// read as slashes, are refused outright.
const OWN_ORIGIN = "http://tidemark.invalid";

export function safeRedirectPath(to: FormDataEntryValue | string | null | undefined, fallback = "/"): string {
  if (typeof to !== "string" || to.length === 0 || to.length > 2000) return fallback;
  // eslint-disable-next-line no-control-regex
  if (/[\u0000-\u001f\u007f\\]/.test(to) || !to.startsWith("/") || to.startsWith("//")) return fallback;
  let url: URL;
  try {
    url = new URL(to, OWN_ORIGIN);
  } catch {
    return fallback;
  }
  if (url.origin !== OWN_ORIGIN) return fallback;
  return `${url.pathname}${url.search}${url.hash}`;
}
