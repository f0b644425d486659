// Names of the files and folders inside a release package, safe on every
// common file system: characters that Windows, macOS or Linux refuse or
// treat specially (/ \ : * ? " < > | and control characters) become "_",
// runs of spaces shrink to one, leading and trailing dots and spaces go
// (Windows drops trailing ones silently), and names are kept short.

const UNSAFE = /[/\\:*?"<>|\u0000-\u001f\u007f]/g;
const MAX_NAME_CHARS = 120;

export function safeName(name: string, fallback: string): string {
  const cleaned = name.normalize("NFC").replace(UNSAFE, "_").replace(/\s+/g, " ").replace(/^[. ]+|[. ]+$/g, "");
  const short = [...cleaned].slice(0, MAX_NAME_CHARS).join("").replace(/[. ]+$/, "");
  return short || fallback;
}

/** "03 Harbour Lights.wav": the position in two digits (three past 99), then the title. */
export function trackFileName(position: number, title: string, extension = "wav"): string {
  const number = String(position).padStart(position > 99 ? 3 : 2, "0");
  return `${number} ${safeName(title, "Track")}.${extension}`;
}

/** Folder names for formats, made unique (case-insensitively) with " (2)", " (3)" … when two clean up alike. */
export function uniqueFolderNames(names: readonly string[]): string[] {
  const taken = new Set<string>();
  return names.map((name) => {
    const base = safeName(name, "Format");
    let candidate = base;
    for (let n = 2; taken.has(candidate.toLowerCase()); n++) candidate = `${base} (${n})`;
    taken.add(candidate.toLowerCase());
    return candidate;
  });
}
