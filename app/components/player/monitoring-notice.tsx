// The reminder to set a safe monitoring level: a short line that always sits
// beside the player, and a notice before the first playback of a browser
// session (remembered in sessionStorage, so a new session asks again).
import { useCallback, useEffect, useState } from "react";

export const MONITORING_ACK_KEY = "tidemark:monitoring-level-set";

const readAck = () => {
  try {
    return window.sessionStorage.getItem(MONITORING_ACK_KEY) === "1";
  } catch {
    return false; // Storage refused (private mode, policy): ask every time.
  }
};

/** Whether the listener confirmed a safe level in this session, and how to record it. */
export function useMonitoringAck(): [boolean, () => void] {
  const [acked, setAcked] = useState(false);
  useEffect(() => setAcked(readAck()), []);
  const ack = useCallback(() => {
    try {
      window.sessionStorage.setItem(MONITORING_ACK_KEY, "1");
    } catch {
      // Not stored; the notice shows again next time, which errs on the safe side.
    }
    setAcked(true);
  }, []);
  return [acked, ack];
}

export function MonitoringReminder() {
  return (
    <p className="text-xs text-ink-soft" data-testid="monitoring-reminder">
      Keep your monitoring level safe: start low and raise it slowly. Masters can be loud, and switching sources can change the level. Defer to
      local regulations on noise exposure.
    </p>
  );
}

export function MonitoringNotice({ onConfirm, onCancel }: { onConfirm: () => void; onCancel: () => void }) {
  return (
    <div role="alertdialog" aria-modal="true" aria-labelledby="monitoring-notice-title" aria-describedby="monitoring-notice-body" className="card border-accent p-4 shadow-sm" data-testid="monitoring-notice">
      <h3 id="monitoring-notice-title" className="text-base font-semibold text-ink">
        Before you listen: set a safe level
      </h3>
      <div id="monitoring-notice-body" className="mt-2 space-y-1 text-sm text-ink-soft">
        <p>Turn your speakers or headphones down, start playback, then raise the level slowly to a comfortable one.</p>
        <p>Level matching is on, so A and B play at the same loudness. Defer to local regulations on noise exposure.</p>
      </div>
      <div className="mt-3 flex gap-2">
        <button type="button" className="btn-primary" onClick={onConfirm} autoFocus>
          My level is safe — play
        </button>
        <button type="button" className="btn-quiet" onClick={onCancel}>
          Not now
        </button>
      </div>
    </div>
  );
}
