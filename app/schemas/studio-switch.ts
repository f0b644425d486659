import { z } from "zod";

export const studioSwitchSchema = z.object({
  studioId: z.uuid({ message: "Choose a studio." }),
  redirectTo: z.string().max(2000).optional(),
});
