/** Only same-site paths, so a crafted link cannot send people elsewhere after sign-in. */
export function safeRedirectPath(to: FormDataEntryValue | string | null | undefined, fallback = "/"): string {
  if (typeof to !== "string" || !to.startsWith("/") || to.startsWith("//") || to.startsWith("/\\")) return fallback;
  return to;
}
