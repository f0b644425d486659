// GET /api/chains/:chainId: the chain and its latest revision (staff).
import type { Route } from "./+types/api.chain";
import { handleApi, json, requireApiUser } from "../lib/api.server.ts";
import { chainFor } from "../lib/api-access.server.ts";
import { STAFF } from "../lib/roles.ts";
import { listRevisions } from "../models/chain.server.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  return handleApi(async () => {
    const user = await requireApiUser(request, STAFF);
    const { track, ...chain } = await chainFor(user, params.chainId);
    const [latest] = await listRevisions(chain.id);
    return json({ chain, latestRevision: latest ?? null });
  });
}
