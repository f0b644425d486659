// The moments a reference is lined up at, from the compare page's query:
// `at` (seconds on the master's axis) and `refAt` (seconds into the
// reference). Both or neither; anything unreadable counts as neither, and
// the loudest 30 s of each are used.
import { z } from "zod";

const seconds = z.coerce.number().finite().min(0).max(24 * 3600);
const alignmentSchema = z.object({ at: seconds, refAt: seconds });

export function parseAlignment(params: URLSearchParams): { masterS: number; referenceS: number } | null {
  if (!params.get("at") || !params.get("refAt")) return null;
  const parsed = alignmentSchema.safeParse({ at: params.get("at"), refAt: params.get("refAt") });
  return parsed.success ? { masterS: parsed.data.at, referenceS: parsed.data.refAt } : null;
}
