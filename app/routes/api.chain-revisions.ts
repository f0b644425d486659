// GET /api/chains/:chainId/revisions: every revision, newest first, or with
// ?from=N&to=M the parameter changes between two. POST: a new revision (staff).
import type { Route } from "./+types/api.chain-revisions";
import { apiError, chainFieldErrors, handleApi, json, methodNotAllowed, readJson, requireApiUser } from "../lib/api.server.ts";
import { chainFor } from "../lib/api-access.server.ts";
import { STAFF } from "../lib/roles.ts";
import { ChainInvalidError, createRevision, diffParams, listRevisions } from "../models/chain.server.ts";
import { apiRevisionSchema } from "../schemas/api.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  return handleApi(async () => {
    const user = await requireApiUser(request, STAFF);
    const chain = await chainFor(user, params.chainId);
    const revisions = await listRevisions(chain.id);
    const search = new URL(request.url).searchParams;
    if (search.has("from") || search.has("to")) {
      const find = (name: string) => revisions.find((r) => String(r.revision) === search.get(name));
      const from = find("from");
      const to = find("to");
      if (!from || !to) return apiError(400, "Name two revisions of this chain", { ...(from ? {} : { from: "no such revision" }), ...(to ? {} : { to: "no such revision" }) });
      return json({ from: from.revision, to: to.revision, changes: diffParams(from.params, to.params) });
    }
    return json({ revisions });
  });
}

export async function action({ request, params }: Route.ActionArgs) {
  return handleApi(async () => {
    if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
    const user = await requireApiUser(request, STAFF);
    const chain = await chainFor(user, params.chainId);
    const input = await readJson(request, apiRevisionSchema);
    try {
      const revision = await createRevision(chain.id, input.params, user.id);
      return json({ revision }, 201);
    } catch (error) {
      if (!(error instanceof ChainInvalidError)) throw error;
      return apiError(400, "The chain is not valid", chainFieldErrors(error.fieldErrors));
    }
  });
}
