import { z } from "zod";

/** How long an invitation link works. */
export const INVITATION_DAYS = 7;

export const INVITABLE_ROLES = ["engineer", "client"] as const;

export const invitationSchema = z
  .object({
    email: z.string().trim().min(1, "Enter an e-mail address").max(254).email("Enter a valid e-mail address"),
    role: z.enum(INVITABLE_ROLES, { error: "Choose engineer or client" }),
    clientId: z.string().optional(),
  })
  .superRefine((value, ctx) => {
    if (value.role === "client" && !z.uuid().safeParse(value.clientId).success) {
      ctx.addIssue({ code: "custom", path: ["clientId"], message: "Choose which client this person belongs to" });
    }
  })
  .transform((value) => ({ ...value, clientId: value.role === "client" ? (value.clientId as string) : null }));

export const acceptInvitationSchema = z
  .object({
    name: z.string().trim().min(1, "Enter your name").max(120, "At most 120 characters"),
    password: z.string().min(10, "Use at least 10 characters").max(200, "At most 200 characters"),
    confirm: z.string(),
  })
  .refine((value) => value.password === value.confirm, { path: ["confirm"], message: "The two passwords differ" });

export const roleChangeSchema = z.object({
  membershipId: z.uuid(),
  role: z.enum(["owner", "engineer"], { error: "Choose owner or engineer" }),
});

export const clientSchema = z.object({
  name: z.string().trim().min(1, "Enter the client's name").max(120, "At most 120 characters"),
  kind: z.enum(["artist", "label"], { error: "Choose artist or label" }),
});

export const memberSchema = z.object({ membershipId: z.uuid({ error: "No such member" }) });
