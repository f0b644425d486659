// Turns one description of an e-mail (heading, lines, an optional quote, one
// action link) into its plain-text and HTML parts, so the two never drift
// apart. The HTML is deliberately plain: inline styles (mail clients ignore
// style sheets), a light paper ground, dark ink and one accent colour.
export interface EmailParts {
  subject: string;
  text: string;
  html: string;
}

export interface EmailContent {
  subject: string;
  heading: string;
  /** Paragraphs of plain text; escaped for the HTML part here. */
  lines: string[];
  /** Words of another person (a comment, a note), set apart. */
  quote?: { author: string; body: string } | null;
  action: { label: string; url: string };
  footnote: string;
}

const PAPER = "#f4f1ea";
const CARD = "#fffdf8";
const INK = "#1f1d1a";
const MUTED = "#6b655b";
const RULE = "#d8d2c4";
const ACCENT = "#1d5c63";

export function escapeHtml(value: string): string {
  return value.replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[c]!);
}

/** Only absolute http(s) links go into a message; anything else is a caller's mistake. */
export function checkLink(url: string): string {
  let parsed: URL;
  try {
    parsed = new URL(url);
  } catch {
    throw new Error(`e-mail link is not an absolute URL: ${url}`);
  }
  if (parsed.protocol !== "https:" && parsed.protocol !== "http:") throw new Error(`e-mail link must be http(s): ${url}`);
  return parsed.toString();
}

function paragraphHtml(text: string) {
  return escapeHtml(text).replace(/\n/g, "<br>");
}

export function composeEmail(content: EmailContent): EmailParts {
  const url = checkLink(content.action.url);
  const quoteText = content.quote
    ? `${content.quote.author} wrote:\n${content.quote.body
        .split("\n")
        .map((l) => `> ${l}`)
        .join("\n")}`
    : null;
  const text = [
    content.heading,
    "",
    ...content.lines.flatMap((l) => [l, ""]),
    ...(quoteText ? [quoteText, ""] : []),
    `${content.action.label}: ${url}`,
    "",
    "-- ",
    content.footnote,
    "",
  ].join("\n");

  const quoteHtml = content.quote
    ? `<tr><td style="padding:0 32px 16px"><div style="border-left:3px solid ${ACCENT};padding:4px 0 4px 14px;color:${INK}">
<div style="font-size:13px;color:${MUTED};margin-bottom:4px">${escapeHtml(content.quote.author)} wrote:</div>
<div>${paragraphHtml(content.quote.body)}</div></div></td></tr>`
    : "";
  const html = `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>${escapeHtml(content.subject)}</title></head>
<body style="margin:0;padding:0;background:${PAPER};color:${INK};font-family:Helvetica,Arial,sans-serif;font-size:15px;line-height:1.55">
<table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="background:${PAPER}"><tr><td align="center" style="padding:32px 12px">
<table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="max-width:560px;background:${CARD};border:1px solid ${RULE}">
<tr><td style="padding:28px 32px 8px;font-size:12px;letter-spacing:.12em;text-transform:uppercase;color:${ACCENT}">Tidemark</td></tr>
<tr><td style="padding:0 32px 12px"><h1 style="margin:0;font-size:20px;font-weight:600;color:${INK}">${escapeHtml(content.heading)}</h1></td></tr>
${content.lines.map((l) => `<tr><td style="padding:0 32px 12px">${paragraphHtml(l)}</td></tr>`).join("\n")}
${quoteHtml}
<tr><td style="padding:8px 32px 28px"><a href="${escapeHtml(url)}" style="display:inline-block;background:${ACCENT};color:${CARD};text-decoration:none;padding:10px 18px;font-weight:600">${escapeHtml(content.action.label)}</a>
<div style="margin-top:12px;font-size:12px;color:${MUTED};word-break:break-all">${escapeHtml(url)}</div></td></tr>
<tr><td style="padding:16px 32px 24px;border-top:1px solid ${RULE};font-size:12px;color:${MUTED}">${escapeHtml(content.footnote)}</td></tr>
</table></td></tr></table>
</body></html>`;
  return { subject: content.subject, text, html };
}
