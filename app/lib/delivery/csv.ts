// CSV after RFC 4180: fields with a comma, a double quote, CR or LF are
// quoted, quotes inside are doubled, lines end with CRLF. Text that a
// spreadsheet would run as a formula (starting with = + - @, tab or CR) is
// prefixed with an apostrophe (common practice against formula injection);
// numbers are written as numbers and never prefixed.

export type CsvCell = string | number | null | undefined;

const FORMULA_START = /^[=+\-@\t\r]/;

export function csvField(value: CsvCell): string {
  if (value === null || value === undefined) return "";
  let text = typeof value === "number" ? (Number.isFinite(value) ? String(value) : "") : value;
  if (typeof value === "string" && FORMULA_START.test(text)) text = `'${text}`;
  return /[",\r\n]/.test(text) ? `"${text.replaceAll('"', '""')}"` : text;
}

export function toCsv(rows: readonly (readonly CsvCell[])[]): string {
  return rows.map((row) => row.map(csvField).join(",")).join("\r\n") + "\r\n";
}
