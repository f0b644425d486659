// One parameter of the desk: a number that takes typing, a vertical drag on
// its grip, the mouse wheel (while it has focus, so scrolling the page never
// changes a value) and the arrow keys (Page Up/Down ten steps), each by the
// field's step or a tenth of it with Shift. Every change goes out at once.
import { useEffect, useId, useRef, useState } from "react";
import type { FieldRange } from "../../../dsp/chain/fields.ts";
import { nudge } from "./chain-state.ts";

/** Keeps what was typed: a number when it reads as one, else the text (the check names the problem). */
function readNumber(raw: string): number | string {
  const n = Number(raw.trim().replace("−", "-"));
  return raw.trim() !== "" && Number.isFinite(n) ? n : raw;
}

/** Pixels of drag per step. */
const DRAG_PX_PER_STEP = 3;

export function ParamControl({
  range,
  label,
  value,
  error,
  dataPath,
  onChange,
}: {
  range: FieldRange;
  label?: string;
  value: unknown;
  error?: string;
  dataPath: string;
  onChange: (value: number | string) => void;
}) {
  const id = useId();
  const input = useRef<HTMLInputElement>(null);
  const numeric = typeof value === "number" ? value : (range.default ?? range.min);
  // The text shown: the value, except while the engineer is typing something that is not (yet) a number.
  const [draft, setDraft] = useState<string | null>(null);
  const text = draft ?? (value === undefined || value === null ? "" : String(value));
  const latest = useRef({ numeric, onChange });
  latest.current = { numeric, onChange };

  const step = (steps: number, fine: boolean) => {
    setDraft(null);
    latest.current.onChange(nudge(latest.current.numeric, range, steps, fine));
  };

  // React's wheel listener is passive; this one must be able to keep the page still.
  useEffect(() => {
    const el = input.current;
    if (!el) return;
    const onWheel = (e: WheelEvent) => {
      if (document.activeElement !== el || e.deltaY === 0) return;
      e.preventDefault();
      setDraft(null);
      latest.current.onChange(nudge(latest.current.numeric, range, e.deltaY < 0 ? 1 : -1, e.shiftKey));
    };
    el.addEventListener("wheel", onWheel, { passive: false });
    return () => el.removeEventListener("wheel", onWheel);
  }, [range]);

  const drag = useRef<{ y: number; start: number; pointer: number } | null>(null);
  const label_ = label ?? range.label;
  const unit = range.unit;
  return (
    <div className="min-w-0">
      <label htmlFor={id} className="mb-0.5 block truncate text-xs font-medium text-ink-soft">
        {label_}
        {unit && <span className="font-normal"> ({unit})</span>}
      </label>
      <div className="flex items-stretch">
        <span
          aria-hidden="true"
          title="Drag up or down (Shift: finer)"
          className="flex w-5 shrink-0 cursor-ns-resize touch-none items-center justify-center rounded-l-md border border-r-0 border-rule bg-paper text-xs text-ink-faint select-none"
          onPointerDown={(e) => {
            e.preventDefault();
            e.currentTarget.setPointerCapture(e.pointerId);
            drag.current = { y: e.clientY, start: latest.current.numeric, pointer: e.pointerId };
            input.current?.focus();
          }}
          onPointerMove={(e) => {
            const d = drag.current;
            if (!d || d.pointer !== e.pointerId) return;
            const steps = Math.trunc((d.y - e.clientY) / DRAG_PX_PER_STEP);
            const next = nudge(d.start, range, steps, e.shiftKey);
            if (next !== latest.current.numeric) {
              setDraft(null);
              latest.current.onChange(next);
            }
          }}
          onPointerUp={() => (drag.current = null)}
          onPointerCancel={() => (drag.current = null)}
        >
          ⇕
        </span>
        <input
          ref={input}
          id={id}
          type="text"
          inputMode="decimal"
          role="spinbutton"
          autoComplete="off"
          className="field-input num min-w-0 rounded-l-none px-2 py-1 text-sm"
          data-path={dataPath}
          data-param="true"
          value={text}
          aria-valuenow={typeof value === "number" ? value : undefined}
          aria-valuemin={range.min}
          aria-valuemax={range.max}
          aria-invalid={error ? true : undefined}
          aria-describedby={error ? `${id}-error` : undefined}
          onChange={(e) => {
            const read = readNumber(e.target.value);
            setDraft(typeof read === "number" && String(read) === e.target.value ? null : e.target.value);
            onChange(read);
          }}
          onBlur={() => setDraft(null)}
          onKeyDown={(e) => {
            const steps = e.key === "ArrowUp" ? 1 : e.key === "ArrowDown" ? -1 : e.key === "PageUp" ? 10 : e.key === "PageDown" ? -10 : 0;
            if (steps === 0) return;
            e.preventDefault();
            step(steps, e.shiftKey);
          }}
        />
      </div>
      {error && (
        <p id={`${id}-error`} className="mt-0.5 text-xs text-danger" role="alert">
          {error}
        </p>
      )}
    </div>
  );
}
