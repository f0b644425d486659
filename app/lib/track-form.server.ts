// Validation of the track form: the schema, then a free position on the release.
import { parseForm, formValues, type FormResult } from "./forms.ts";
import { trackSchema, type TrackInput } from "../schemas/track.ts";
import { trackAtPosition } from "../models/track.server.ts";

export async function validateTrackForm(releaseId: string, form: FormData, exceptTrackId?: string): Promise<FormResult<TrackInput>> {
  const result = parseForm(trackSchema, form);
  if (!result.ok) return result;
  const taken = await trackAtPosition(releaseId, result.data.position, exceptTrackId);
  if (taken) {
    return { ok: false, errors: { position: `Position ${taken.position} is “${taken.title}”; choose another` }, values: formValues(form) };
  }
  return result;
}

export const POSITION_RACE_MESSAGE = "Someone else just used this position; choose another";
