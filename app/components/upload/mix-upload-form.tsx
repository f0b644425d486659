// Upload of one or more mix files: pick or drop them. With scripts, each file
// is sent on its own (raw body, XMLHttpRequest) so its progress can be shown;
// without, the form posts as multipart to the track page.
import { useRef, useState } from "react";
import { useRevalidator } from "react-router";

type Item = { name: string; sizeBytes: number; sentBytes: number; state: "waiting" | "sending" | "checking" | "done" | "failed"; message?: string };

function sendFile(url: string, file: File, onProgress: (sent: number) => void): Promise<{ ok: boolean; message?: string; version?: number }> {
  return new Promise((resolve) => {
    const xhr = new XMLHttpRequest();
    xhr.open("POST", url);
    xhr.setRequestHeader("Content-Type", "application/octet-stream");
    xhr.setRequestHeader("X-File-Name", encodeURIComponent(file.name));
    xhr.setRequestHeader("Accept", "application/json");
    xhr.upload.onprogress = (event) => onProgress(event.loaded);
    xhr.onload = () => {
      let body: { error?: string; mix?: { version: number } } = {};
      try {
        body = JSON.parse(xhr.responseText);
      } catch {
        // A proxy's own error page: fall through to the status line.
      }
      if (xhr.status >= 200 && xhr.status < 300) resolve({ ok: true, version: body.mix?.version });
      else resolve({ ok: false, message: body.error ?? `The upload failed (${xhr.status} ${xhr.statusText}).` });
    };
    xhr.onerror = () => resolve({ ok: false, message: "The connection was lost during the upload." });
    xhr.send(file);
  });
}

type UploadFormProps = {
  uploadUrl: string;
  maxBytesLabel: string;
  error?: string;
  /** The field's label and hint, for uploads other than mix versions (reference tracks). */
  label?: string;
  hint?: string;
  inputId?: string;
};

export function MixUploadForm({ uploadUrl, maxBytesLabel, error, label, hint, inputId = "mix-files" }: UploadFormProps) {
  const input = useRef<HTMLInputElement>(null);
  const [items, setItems] = useState<Item[]>([]);
  const [dragging, setDragging] = useState(false);
  const [busy, setBusy] = useState(false);
  const revalidator = useRevalidator();

  async function upload(files: File[]) {
    if (files.length === 0 || busy) return;
    setBusy(true);
    const start: Item[] = files.map((f) => ({ name: f.name, sizeBytes: f.size, sentBytes: 0, state: "waiting" }));
    setItems(start);
    const update = (i: number, patch: Partial<Item>) => setItems((now) => now.map((item, j) => (j === i ? { ...item, ...patch } : item)));
    for (let i = 0; i < files.length; i++) {
      update(i, { state: "sending" });
      const result = await sendFile(uploadUrl, files[i], (sent) => update(i, { sentBytes: sent, state: sent >= files[i].size ? "checking" : "sending" }));
      update(i, result.ok ? { state: "done", sentBytes: files[i].size, message: result.version ? `stored as v${result.version}` : undefined } : { state: "failed", message: result.message });
      revalidator.revalidate();
    }
    if (input.current) input.current.value = "";
    setBusy(false);
  }

  return (
    <form
      method="post"
      encType="multipart/form-data"
      className={`card mt-3 p-4 ${dragging ? "outline-2 outline-accent outline-dashed" : ""}`}
      onSubmit={(event) => {
        event.preventDefault();
        void upload([...(input.current?.files ?? [])]);
      }}
      onDragOver={(event) => {
        event.preventDefault();
        setDragging(true);
      }}
      onDragLeave={() => setDragging(false)}
      onDrop={(event) => {
        event.preventDefault();
        setDragging(false);
        void upload([...event.dataTransfer.files]);
      }}
    >
      <input type="hidden" name="intent" value="upload" />
      <label htmlFor={inputId} className="mb-1.5 block text-sm font-medium">
        {label ?? "Upload a new mix version (WAV)"}
      </label>
      <p className="mb-2 text-sm text-ink-faint">{hint ?? `Choose files or drop them here. Up to ${maxBytesLabel} a file; each becomes the next version.`}</p>
      <div className="flex flex-wrap items-center gap-3">
        <input ref={input} id={inputId} name="file" type="file" multiple accept=".wav,audio/wav,audio/x-wav" className="max-w-full text-sm" />
        <button type="submit" className="btn-primary" disabled={busy}>
          {busy ? "Uploading…" : "Upload"}
        </button>
      </div>
      {error && (
        <p className="mt-2 text-sm text-danger" role="alert">
          {error}
        </p>
      )}
      {items.length > 0 && (
        <ul className="mt-3 space-y-2" aria-label="Uploads">
          {items.map((item, i) => (
            <li key={`${item.name}-${i}`} className="text-sm">
              <div className="flex justify-between gap-2">
                <span className="truncate">{item.name}</span>
                <span className={item.state === "failed" ? "text-danger" : "text-ink-soft"}>
                  {item.state === "sending" && <span className="num">{Math.round((100 * item.sentBytes) / Math.max(item.sizeBytes, 1))} %</span>}
                  {item.state === "checking" && "checking…"}
                  {item.state === "waiting" && "waiting"}
                  {item.state === "done" && (item.message ?? "done")}
                </span>
              </div>
              <progress className="h-2 w-full accent-accent" max={Math.max(item.sizeBytes, 1)} value={item.sentBytes} aria-label={`Upload of ${item.name}`} />
              {item.state === "failed" && (
                <p className="text-danger" role="alert">
                  {item.message}
                </p>
              )}
            </li>
          ))}
        </ul>
      )}
    </form>
  );
}
