// Any other /api/ path: a JSON 404 rather than the HTML page.
import { apiNotFound } from "../lib/api.server.ts";

export async function loader() {
  return apiNotFound();
}

export async function action() {
  return apiNotFound();
}
