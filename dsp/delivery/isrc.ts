// International Standard Recording Code (ISO 3901): 12 characters,
//   CC  country code, 2 letters
//   XXX registrant code, 3 letters or digits
//   YY  year of reference, 2 digits
//   NNNNN designation code, 5 digits.
// The hyphenated display form CC-XXX-YY-NNNNN (hyphens are not part of the
// code) and lowercase are accepted on input; the code is stored and written
// in the compact uppercase form. Whether the country code is an allocated
// one is not checked here (the list changes; registrars decide).

export type IsrcResult = { ok: true; isrc: string } | { ok: false; message: string };

const DISPLAY_FORM = /^([A-Z0-9]{2})-([A-Z0-9]{3})-([A-Z0-9]{2})-([A-Z0-9]{5})$/;

/** Validates and normalises; never throws. */
export function parseIsrc(input: string): IsrcResult {
  const trimmed = input.trim().toUpperCase();
  let compact: string;
  if (trimmed.includes("-")) {
    const match = DISPLAY_FORM.exec(trimmed);
    if (!match) return { ok: false, message: "ISRC with hyphens must read CC-XXX-YY-NNNNN (2, 3, 2 and 5 characters)" };
    compact = match.slice(1).join("");
  } else {
    compact = trimmed;
  }
  if (/[^A-Z0-9]/.test(compact)) return { ok: false, message: "ISRC may contain only letters, digits and the display hyphens" };
  if (compact.length !== 12) return { ok: false, message: `ISRC must have 12 characters (got ${compact.length})` };
  if (!/^[A-Z]{2}$/.test(compact.slice(0, 2))) return { ok: false, message: "ISRC country code (characters 1-2) must be two letters" };
  // Registrant code: 3 alphanumerics; already guaranteed by the character check.
  if (!/^[0-9]{2}$/.test(compact.slice(5, 7))) return { ok: false, message: "ISRC year of reference (characters 6-7) must be two digits" };
  if (!/^[0-9]{5}$/.test(compact.slice(7, 12))) return { ok: false, message: "ISRC designation code (characters 8-12) must be five digits" };
  return { ok: true, isrc: compact };
}

/** The compact uppercase form; throws with the specific message when invalid. */
export function normaliseIsrc(input: string): string {
  const result = parseIsrc(input);
  if (!result.ok) throw new Error(result.message);
  return result.isrc;
}

/** CC-XXX-YY-NNNNN for display. Expects a valid code. */
export const formatIsrc = (isrc: string): string => {
  const compact = normaliseIsrc(isrc);
  return `${compact.slice(0, 2)}-${compact.slice(2, 5)}-${compact.slice(5, 7)}-${compact.slice(7)}`;
};
