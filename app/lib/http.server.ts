// Responses thrown from loaders and actions.

/** Missing and forbidden look the same, so a record's existence never leaks. */
export function notFound(): Response {
  return new Response("Not Found", { status: 404, statusText: "Not Found" });
}
