// Roles of a studio member, shared by browser and server.
export const ROLES = ["owner", "engineer", "client"] as const;
export type Role = (typeof ROLES)[number];

/** Staff master releases; clients only see their own. */
export const STAFF: readonly Role[] = ["owner", "engineer"];

export function isStaff(role: Role): boolean {
  return STAFF.includes(role);
}
