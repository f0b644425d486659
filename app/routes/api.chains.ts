// GET /api/chains: the studio's templates, or with ?trackId= a track's chains (staff).
// POST: a new chain (for a track, or a template) from a template or from parameters.
import type { Route } from "./+types/api.chains";
import { apiError, chainFieldErrors, handleApi, json, methodNotAllowed, readJson, requireApiUser } from "../lib/api.server.ts";
import { trackFor } from "../lib/api-access.server.ts";
import { STAFF } from "../lib/roles.ts";
import { startChain } from "../lib/chain-access.server.ts";
import { createChain, createRevision, listRevisions, listTemplates, listTrackChains, type Chain } from "../models/chain.server.ts";
import { apiNewChainSchema } from "../schemas/api.ts";
import { parseChain } from "../../dsp/chain/schema.ts";

export async function loader({ request }: Route.LoaderArgs) {
  return handleApi(async () => {
    const user = await requireApiUser(request, STAFF);
    const trackId = new URL(request.url).searchParams.get("trackId");
    const chains: Chain[] = trackId ? await listTrackChains((await trackFor(user, trackId)).track.id) : await listTemplates(user.studioId);
    return json({ chains });
  });
}

export async function action({ request }: Route.ActionArgs) {
  return handleApi(async () => {
    if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
    const user = await requireApiUser(request, STAFF);
    const input = await readJson(request, apiNewChainSchema);
    const trackId = input.trackId ? (await trackFor(user, input.trackId)).track.id : null;
    let chain: Chain | undefined;
    if (input.params !== undefined) {
      const parsed = parseChain(input.params);
      if (!parsed.ok) return apiError(400, "The chain is not valid", chainFieldErrors(parsed.errors));
      chain = await createChain({ studioId: user.studioId, trackId, name: input.name });
      await createRevision(chain.id, parsed.chain, user.id);
    } else {
      chain = await startChain(user, { trackId, name: input.name, templateId: input.templateId });
      if (!chain) return apiError(400, "Some fields are not valid", { templateId: "must be one of the studio's templates" });
    }
    const [revision] = await listRevisions(chain.id);
    return json({ chain, revision }, 201, { Location: `/api/chains/${chain.id}` });
  });
}
