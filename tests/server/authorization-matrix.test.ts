// Every route × every persona → allowed, 404, or a redirect (to sign-in, or
// home for pages meant for the signed-out), against the real database.
// Route modules are called directly with a Request carrying a session cookie.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { cookieFor, createFixture, destroyFixture, outcomeOf, PERSONAS, requestAs, type Fixture, type Outcome, type Persona } from "./fixtures.ts";
import { createInvitation } from "../../app/models/invitation.server.ts";
import routes from "../../app/routes.ts";
import * as signIn from "../../app/routes/sign-in.tsx";
import * as signOut from "../../app/routes/sign-out.tsx";
import * as studioSwitch from "../../app/routes/studio-switch.ts";
import * as invitation from "../../app/routes/invitation.tsx";
import * as workspace from "../../app/routes/workspace.tsx";
import * as dashboard from "../../app/routes/dashboard.tsx";
import * as releases from "../../app/routes/releases.tsx";
import * as releaseNew from "../../app/routes/release-new.tsx";
import * as release from "../../app/routes/release.tsx";
import * as releaseEdit from "../../app/routes/release-edit.tsx";
import * as trackNew from "../../app/routes/track-new.tsx";
import * as track from "../../app/routes/track.tsx";
import * as trackEdit from "../../app/routes/track-edit.tsx";
import * as team from "../../app/routes/team.tsx";
import * as outbox from "../../app/routes/outbox.tsx";
import * as settings from "../../app/routes/settings.tsx";
import * as chainNew from "../../app/routes/chain-new.tsx";
import * as chainPage from "../../app/routes/chain.tsx";
import * as templates from "../../app/routes/templates.tsx";
import * as settingsTokens from "../../app/routes/settings-tokens.tsx";
import { createChain, createRevision } from "../../app/models/chain.server.ts";
import { db } from "../../app/lib/db.server.ts";
import { storage } from "../../app/lib/storage/storage.server.ts";
import * as apiReleases from "../../app/routes/api.releases.ts";
import * as apiReleaseTracks from "../../app/routes/api.release-tracks.ts";
import * as apiChains from "../../app/routes/api.chains.ts";
import * as apiChain from "../../app/routes/api.chain.ts";
import * as apiChainRevisions from "../../app/routes/api.chain-revisions.ts";
import * as apiRenders from "../../app/routes/api.renders.ts";
import * as apiRender from "../../app/routes/api.render.ts";
import * as apiRenderCancel from "../../app/routes/api.render-cancel.ts";
import * as apiRenderTraces from "../../app/routes/api.render-traces.ts";
import * as apiNotFound from "../../app/routes/api.not-found.ts";
import * as apiRenderAudio from "../../app/routes/api.render-audio.ts";
import * as apiTrackMixes from "../../app/routes/api.track-mixes.ts";
import * as apiMixAudio from "../../app/routes/api.mix-audio.ts";
import * as mixUpload from "../../app/routes/mix-upload.ts";
import * as downloadMix from "../../app/routes/download.mix.ts";
import * as renderNew from "../../app/routes/render-new.tsx";
import * as renderPage from "../../app/routes/render.tsx";
import * as renderProgress from "../../app/routes/render-progress.ts";
import * as downloadRender from "../../app/routes/download.render.ts";
import * as renderAudio from "../../app/routes/render-audio.tsx";
import * as referenceUpload from "../../app/routes/reference-upload.ts";
import * as referenceAudio from "../../app/routes/reference-audio.ts";
import * as compare from "../../app/routes/compare.tsx";
import * as review from "../../app/routes/review.tsx";
import * as reviewRoom from "../../app/routes/review-room.tsx";
import * as paymentsWebhook from "../../app/routes/api.payments.webhook.ts";
import * as releasePackage from "../../app/routes/release-package.ts";
import * as loudnessReport from "../../app/routes/release-loudness-report.ts";
import * as releaseInvoice from "../../app/routes/release-invoice.ts";
import { addStoredRender, type StoredRender } from "./download-fixture.ts";
import * as releaseDelivery from "../../app/routes/release-delivery.tsx";
import * as loudnessReportPage from "../../app/routes/loudness-report.tsx";
import * as settingsBillingPage from "../../app/routes/settings-billing-page.tsx";

type Expect = Record<Persona, Outcome>;
const everyone = (outcome: Outcome): Expect => Object.fromEntries(PERSONAS.map((p) => [p, outcome])) as Expect;
const signedIn: Expect = { ...everyone("allowed"), signedOut: "sign-in" };
const signedOutOnly: Expect = { ...everyone("home"), signedOut: "allowed" };
// Pages of the studio as a whole: any studio's staff, in their own studio.
const staff: Expect = { signedOut: "sign-in", otherClient: "404", client: "404", engineer: "allowed", owner: "allowed", otherStudio: "allowed" };
// One release of the first client.
const releaseViewers: Expect = { signedOut: "sign-in", otherClient: "404", client: "allowed", engineer: "allowed", owner: "allowed", otherStudio: "404" };
const releaseStaff: Expect = { ...releaseViewers, client: "404" };
const ownerOnly: Expect = { ...everyone("404"), signedOut: "sign-in", owner: "allowed" };
// The release's owner and its client: invoices are no engineer's business.
const releaseBilling: Expect = { ...releaseViewers, engineer: "404" };
const releaseOwner: Expect = { ...releaseStaff, engineer: "404" };

type Handler = (args: { request: Request; params: Record<string, string>; context: unknown }) => Promise<unknown>;
type Case = { route: string; file: string; kind: "loader" | "action"; handler: Handler; path: (f: Fixture) => string; params?: (f: Fixture) => Record<string, string>; form?: Record<string, string> | (() => Record<string, string>); expected: Expect };

let fixture: Fixture;

/** Signing out ends the persona's server-side session; the rest of the matrix gets a fresh one. */
const signOutKeepingFixture: Handler = async (args) => {
  const result = await (signOut.action as Handler)(args);
  for (const persona of PERSONAS) {
    if (persona === "signedOut") continue;
    const user = fixture.users[persona];
    user.cookie = await cookieFor(user.id, persona === "otherStudio" ? fixture.otherStudioId : fixture.studioId);
  }
  return result;
};
let invitationToken: string;
let trackChainId: string;
let apiRenderId: string;
// A second finished render, sent to the client for review (the first one is not).
let reviewed: StoredRender;
// Another release of the first client, whose invoice is paid, with a print sent for review.
let paidReleaseId: string;
let paidPrint: StoredRender & { trackId: string };
const reviewedTracesKey = () => `renders/${reviewed.renderId}/traces.json`;

// API routes answer with a JSON status instead of throwing: 401 reads as "sign-in", 404 as "404".
const api =
  (handler: unknown): Handler =>
  async (args) => {
    const response = (await (handler as Handler)(args)) as Response;
    if (response.status === 404) throw response;
    if (response.status === 401) throw new Response(null, { status: 302, headers: { Location: "/sign-in" } });
    return response;
  };
/** The handler must answer exactly this status (for routes whose outcome is "allowed" for everyone). */
const answers =
  (status: number, handler: unknown): Handler =>
  async (args) => {
    const response = (await (handler as Handler)(args)) as Response;
    if (response.status !== status) throw new Error(`expected ${status}, got ${response.status}`);
    return response;
  };
const rid = () => ({ renderId: apiRenderId });
const cid = () => ({ chainId: trackChainId });

const rel = (f: Fixture) => ({ releaseId: f.releaseId });
const trk = (f: Fixture) => ({ releaseId: f.releaseId, trackId: f.trackId });

// An empty or invalid form: an allowed persona gets a 400 with field errors, so nothing changes.
const cases: Case[] = [
  { route: "/sign-in", file: "routes/sign-in.tsx", kind: "loader", handler: signIn.loader as Handler, path: () => "/sign-in", expected: signedOutOnly },
  { route: "/sign-in", file: "routes/sign-in.tsx", kind: "action", handler: signIn.action as Handler, path: () => "/sign-in", form: { email: "" }, expected: everyone("allowed") },
  { route: "/sign-out", file: "routes/sign-out.tsx", kind: "loader", handler: signOut.loader as Handler, path: () => "/sign-out", expected: everyone("home") },
  { route: "/sign-out", file: "routes/sign-out.tsx", kind: "action", handler: signOutKeepingFixture, path: () => "/sign-out", form: {}, expected: everyone("sign-in") },
  { route: "/studio", file: "routes/studio-switch.ts", kind: "loader", handler: studioSwitch.loader as Handler, path: () => "/studio", expected: everyone("home") },
  // Switching into the second studio: only its own engineer is a member there.
  { route: "/studio", file: "routes/studio-switch.ts", kind: "action", handler: studioSwitch.action as Handler, path: () => "/studio", form: () => ({ studioId: fixture.otherStudioId }), expected: { ...everyone("404"), signedOut: "sign-in", otherStudio: "home" } },
  { route: "/invitations/:token", file: "routes/invitation.tsx", kind: "loader", handler: invitation.loader as Handler, path: () => `/invitations/${invitationToken}`, params: () => ({ token: invitationToken }), expected: signedOutOnly },
  { route: "/invitations/:token (unknown)", file: "routes/invitation.tsx", kind: "loader", handler: invitation.loader as Handler, path: () => "/invitations/unknown", params: () => ({ token: "x".repeat(43) }), expected: everyone("404") },
  { route: "/invitations/:token", file: "routes/invitation.tsx", kind: "action", handler: invitation.action as Handler, path: () => `/invitations/${invitationToken}`, params: () => ({ token: invitationToken }), form: { name: "" }, expected: signedOutOnly },
  { route: "(workspace layout)", file: "routes/workspace.tsx", kind: "loader", handler: workspace.loader as unknown as Handler, path: () => "/", expected: signedIn },
  { route: "/", file: "routes/dashboard.tsx", kind: "loader", handler: dashboard.loader as Handler, path: () => "/", expected: signedIn },
  { route: "/releases", file: "routes/releases.tsx", kind: "loader", handler: releases.loader as Handler, path: () => "/releases", expected: staff },
  { route: "/releases/new", file: "routes/release-new.tsx", kind: "loader", handler: releaseNew.loader as Handler, path: () => "/releases/new", expected: staff },
  { route: "/releases/new", file: "routes/release-new.tsx", kind: "action", handler: releaseNew.action as Handler, path: () => "/releases/new", form: { title: "" }, expected: staff },
  { route: "/releases/:releaseId", file: "routes/release.tsx", kind: "loader", handler: release.loader as Handler, path: (f) => `/releases/${f.releaseId}`, params: rel, expected: releaseViewers },
  { route: "/releases/:releaseId", file: "routes/release.tsx", kind: "action", handler: release.action as Handler, path: (f) => `/releases/${f.releaseId}`, params: rel, form: { trackId: "" }, expected: releaseStaff },
  { route: "/releases/:releaseId/edit", file: "routes/release-edit.tsx", kind: "loader", handler: releaseEdit.loader as Handler, path: (f) => `/releases/${f.releaseId}/edit`, params: rel, expected: releaseStaff },
  { route: "/releases/:releaseId/edit", file: "routes/release-edit.tsx", kind: "action", handler: releaseEdit.action as Handler, path: (f) => `/releases/${f.releaseId}/edit`, params: rel, form: { title: "" }, expected: releaseStaff },
  { route: "/releases/:releaseId/tracks/new", file: "routes/track-new.tsx", kind: "loader", handler: trackNew.loader as Handler, path: (f) => `/releases/${f.releaseId}/tracks/new`, params: rel, expected: releaseStaff },
  { route: "/releases/:releaseId/tracks/new", file: "routes/track-new.tsx", kind: "action", handler: trackNew.action as Handler, path: (f) => `/releases/${f.releaseId}/tracks/new`, params: rel, form: { title: "" }, expected: releaseStaff },
  { route: "/releases/:releaseId/tracks/:trackId", file: "routes/track.tsx", kind: "loader", handler: track.loader as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}`, params: trk, expected: releaseViewers },
  { route: "/releases/:releaseId/tracks/:trackId/edit", file: "routes/track-edit.tsx", kind: "loader", handler: trackEdit.loader as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/edit`, params: trk, expected: releaseStaff },
  { route: "/releases/:releaseId/tracks/:trackId/edit", file: "routes/track-edit.tsx", kind: "action", handler: trackEdit.action as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/edit`, params: trk, form: { title: "" }, expected: releaseStaff },
  { route: "/team", file: "routes/team.tsx", kind: "loader", handler: team.loader as Handler, path: () => "/team", expected: ownerOnly },
  { route: "/team", file: "routes/team.tsx", kind: "action", handler: team.action as Handler, path: () => "/team", form: { intent: "invite", email: "" }, expected: ownerOnly },
  { route: "/outbox", file: "routes/outbox.tsx", kind: "loader", handler: outbox.loader as Handler, path: () => "/outbox", expected: ownerOnly },
  { route: "/settings", file: "routes/settings.tsx", kind: "loader", handler: settings.loader as Handler, path: () => "/settings", expected: signedIn },
  { route: "/settings", file: "routes/settings.tsx", kind: "action", handler: settings.action as Handler, path: () => "/settings", form: { intent: "profile", name: "" }, expected: signedIn },
  { route: "/settings (studio)", file: "routes/settings.tsx", kind: "action", handler: settings.action as Handler, path: () => "/settings", form: { intent: "studio", name: "" }, expected: ownerOnly },
  { route: "/releases/:releaseId/tracks/:trackId/chains/new", file: "routes/chain-new.tsx", kind: "loader", handler: chainNew.loader as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/chains/new`, params: trk, expected: releaseStaff },
  { route: "/releases/:releaseId/tracks/:trackId/chains/new", file: "routes/chain-new.tsx", kind: "action", handler: chainNew.action as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/chains/new`, params: trk, form: { name: "" }, expected: releaseStaff },
  { route: "/chains/:chainId", file: "routes/chain.tsx", kind: "loader", handler: chainPage.loader as Handler, path: () => `/chains/${trackChainId}`, params: () => ({ chainId: trackChainId }), expected: releaseStaff },
  { route: "/chains/:chainId", file: "routes/chain.tsx", kind: "action", handler: chainPage.action as Handler, path: () => `/chains/${trackChainId}`, params: () => ({ chainId: trackChainId }), form: { params: "{" }, expected: releaseStaff },
  // The desk on a mix of the chain's track (the loader reads its analysis for the default region).
  { route: "/chains/:chainId?mix=", file: "routes/chain.tsx", kind: "loader", handler: chainPage.loader as Handler, path: () => `/chains/${trackChainId}?mix=${stored.mixId}`, params: () => ({ chainId: trackChainId }), expected: releaseStaff },
  // A render from the desk without a kind: staff get the 400 with field errors; nothing is saved or queued.
  { route: "/chains/:chainId (render)", file: "routes/chain.tsx", kind: "action", handler: chainPage.action as Handler, path: () => `/chains/${trackChainId}`, params: () => ({ chainId: trackChainId }), form: () => ({ intent: "render", params: JSON.stringify({ stages: [] }), mixId: stored.mixId }), expected: releaseStaff },
  { route: "/templates", file: "routes/templates.tsx", kind: "loader", handler: templates.loader as Handler, path: () => "/templates", expected: staff },
  { route: "/templates", file: "routes/templates.tsx", kind: "action", handler: templates.action as Handler, path: () => "/templates", form: { name: "" }, expected: staff },
  { route: "/settings/tokens", file: "routes/settings-tokens.tsx", kind: "loader", handler: settingsTokens.loader as Handler, path: () => "/settings/tokens", expected: signedIn },
  { route: "/settings/tokens", file: "routes/settings-tokens.tsx", kind: "action", handler: settingsTokens.action as Handler, path: () => "/settings/tokens", form: { intent: "create", name: "" }, expected: signedIn },
  { route: "/releases/:releaseId/tracks/:trackId", file: "routes/track.tsx", kind: "action", handler: track.action as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}`, params: trk, form: {}, expected: releaseStaff },
  // References are staff-only: a non-WAV body is refused with its message (allowed); everyone else meets a 404.
  { route: "/releases/:releaseId/references", file: "routes/reference-upload.ts", kind: "action", handler: referenceUpload.action as Handler, path: (f) => `/releases/${f.releaseId}/references`, params: rel, form: {}, expected: releaseStaff },
  // An unknown reference: 404 even for the release's staff; signed out, the sign-in page.
  { route: "/releases/:releaseId/references/:referenceId/audio (unknown)", file: "routes/reference-audio.ts", kind: "loader", handler: referenceAudio.loader as Handler, path: (f) => `/releases/${f.releaseId}/references/00000000-0000-4000-8000-000000000000/audio`, params: (f) => ({ releaseId: f.releaseId, referenceId: "00000000-0000-4000-8000-000000000000" }), expected: { ...everyone("404"), signedOut: "sign-in" } },
  { route: "…/tracks/:trackId/mixes", file: "routes/mix-upload.ts", kind: "action", handler: mixUpload.action as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/mixes`, params: trk, form: {}, expected: releaseStaff },
  { route: "…/mixes/:mixId/download", file: "routes/download.mix.ts", kind: "loader", handler: downloadMix.loader as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/mixes/${stored.mixId}/download`, params: (f) => ({ ...trk(f), mixId: stored.mixId }), expected: releaseStaff },
  { route: "…/renders/new", file: "routes/render-new.tsx", kind: "loader", handler: renderNew.loader as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/renders/new`, params: trk, expected: releaseStaff },
  { route: "…/renders/new", file: "routes/render-new.tsx", kind: "action", handler: renderNew.action as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/renders/new`, params: trk, form: {}, expected: releaseStaff },
  // Renders follow app/lib/render-visibility.server.ts: a client sees one once it is sent for review,
  // and takes a print's file away once the release's invoice is paid.
  { route: "…/renders/:renderId (not sent)", file: "routes/render.tsx", kind: "loader", handler: renderPage.loader as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/renders/${stored.renderId}`, params: (f) => ({ ...trk(f), renderId: stored.renderId }), expected: releaseStaff },
  { route: "…/renders/:renderId (sent for review)", file: "routes/render.tsx", kind: "loader", handler: renderPage.loader as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/renders/${reviewed.renderId}`, params: (f) => ({ ...trk(f), renderId: reviewed.renderId }), expected: releaseViewers },
  { route: "…/renders/:renderId", file: "routes/render.tsx", kind: "action", handler: renderPage.action as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/renders/${stored.renderId}`, params: (f) => ({ ...trk(f), renderId: stored.renderId }), form: {}, expected: releaseStaff },
  { route: "…/renders/:renderId/progress (not sent)", file: "routes/render-progress.ts", kind: "loader", handler: renderProgress.loader as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/renders/${stored.renderId}/progress`, params: (f) => ({ ...trk(f), renderId: stored.renderId }), expected: releaseStaff },
  { route: "…/renders/:renderId/progress (sent for review)", file: "routes/render-progress.ts", kind: "loader", handler: renderProgress.loader as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/renders/${reviewed.renderId}/progress`, params: (f) => ({ ...trk(f), renderId: reviewed.renderId }), expected: releaseViewers },
  { route: "…/renders/:renderId/download (not sent)", file: "routes/download.render.ts", kind: "loader", handler: downloadRender.loader as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/renders/${stored.renderId}/download`, params: (f) => ({ ...trk(f), renderId: stored.renderId }), expected: releaseStaff },
  { route: "…/renders/:renderId/download (sent print, unpaid)", file: "routes/download.render.ts", kind: "loader", handler: downloadRender.loader as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/renders/${reviewed.renderId}/download`, params: (f) => ({ ...trk(f), renderId: reviewed.renderId }), expected: { ...releaseViewers, client: "refused" } },
  { route: "…/renders/:renderId/download?inline=1 (sent print, unpaid)", file: "routes/download.render.ts", kind: "loader", handler: downloadRender.loader as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/renders/${reviewed.renderId}/download?inline=1`, params: (f) => ({ ...trk(f), renderId: reviewed.renderId }), expected: releaseViewers },
  { route: "…/renders/:renderId/download (sent print, paid)", file: "routes/download.render.ts", kind: "loader", handler: downloadRender.loader as Handler, path: () => `/releases/${paidReleaseId}/tracks/${paidPrint.trackId}/renders/${paidPrint.renderId}/download`, params: () => ({ releaseId: paidReleaseId, trackId: paidPrint.trackId, renderId: paidPrint.renderId }), expected: releaseViewers },
  { route: "/api/releases", file: "routes/api.releases.ts", kind: "loader", handler: api(apiReleases.loader), path: () => "/api/releases", expected: signedIn },
  { route: "/api/releases", file: "routes/api.releases.ts", kind: "action", handler: api(apiReleases.action), path: () => "/api/releases", form: { title: "" }, expected: staff },
  { route: "/api/releases/:releaseId/tracks", file: "routes/api.release-tracks.ts", kind: "loader", handler: api(apiReleaseTracks.loader), path: (f) => `/api/releases/${f.releaseId}/tracks`, params: rel, expected: releaseViewers },
  { route: "/api/releases/:releaseId/tracks", file: "routes/api.release-tracks.ts", kind: "action", handler: api(apiReleaseTracks.action), path: (f) => `/api/releases/${f.releaseId}/tracks`, params: rel, form: { title: "" }, expected: releaseStaff },
  { route: "/api/chains", file: "routes/api.chains.ts", kind: "loader", handler: api(apiChains.loader), path: () => "/api/chains", expected: staff },
  { route: "/api/chains", file: "routes/api.chains.ts", kind: "action", handler: api(apiChains.action), path: () => "/api/chains", form: { name: "" }, expected: staff },
  { route: "/api/chains/:chainId", file: "routes/api.chain.ts", kind: "loader", handler: api(apiChain.loader), path: () => `/api/chains/${trackChainId}`, params: cid, expected: releaseStaff },
  { route: "/api/chains/:chainId/revisions", file: "routes/api.chain-revisions.ts", kind: "loader", handler: api(apiChainRevisions.loader), path: () => `/api/chains/${trackChainId}/revisions`, params: cid, expected: releaseStaff },
  { route: "/api/chains/:chainId/revisions", file: "routes/api.chain-revisions.ts", kind: "action", handler: api(apiChainRevisions.action), path: () => `/api/chains/${trackChainId}/revisions`, params: cid, form: { params: "" }, expected: releaseStaff },
  { route: "/api/renders", file: "routes/api.renders.ts", kind: "loader", handler: api(apiRenders.loader), path: (f) => `/api/renders?trackId=${f.trackId}`, expected: releaseViewers },
  { route: "/api/renders", file: "routes/api.renders.ts", kind: "action", handler: api(apiRenders.action), path: () => "/api/renders", form: { mixId: "" }, expected: staff },
  { route: "/api/renders/:renderId (queued)", file: "routes/api.render.ts", kind: "loader", handler: api(apiRender.loader), path: () => `/api/renders/${apiRenderId}`, params: rid, expected: releaseStaff },
  { route: "/api/renders/:renderId (sent for review)", file: "routes/api.render.ts", kind: "loader", handler: api(apiRender.loader), path: () => `/api/renders/${reviewed.renderId}`, params: () => ({ renderId: reviewed.renderId }), expected: releaseViewers },
  // GET on the cancel route is a 405 for anyone; it reveals nothing.
  { route: "/api/renders/:renderId/cancel", file: "routes/api.render-cancel.ts", kind: "loader", handler: api(apiRenderCancel.loader), path: () => `/api/renders/${apiRenderId}/cancel`, params: rid, expected: everyone("allowed") },
  { route: "/api/renders/:renderId/cancel", file: "routes/api.render-cancel.ts", kind: "action", handler: api(apiRenderCancel.action), path: () => `/api/renders/${apiRenderId}/cancel`, params: rid, form: {}, expected: releaseStaff },
  { route: "/api/renders/:renderId/traces (queued)", file: "routes/api.render-traces.ts", kind: "loader", handler: api(apiRenderTraces.loader), path: () => `/api/renders/${apiRenderId}/traces`, params: rid, expected: releaseStaff },
  { route: "/api/renders/:renderId/traces (sent for review)", file: "routes/api.render-traces.ts", kind: "loader", handler: api(apiRenderTraces.loader), path: () => `/api/renders/${reviewed.renderId}/traces`, params: () => ({ renderId: reviewed.renderId }), expected: releaseViewers },
  { route: "/api/renders/:renderId/audio (not sent)", file: "routes/api.render-audio.ts", kind: "loader", handler: api(apiRenderAudio.loader), path: () => `/api/renders/${stored.renderId}/audio`, params: () => ({ renderId: stored.renderId }), expected: releaseStaff },
  { route: "/api/renders/:renderId/audio (sent print, unpaid)", file: "routes/api.render-audio.ts", kind: "loader", handler: api(apiRenderAudio.loader), path: () => `/api/renders/${reviewed.renderId}/audio`, params: () => ({ renderId: reviewed.renderId }), expected: { ...releaseViewers, client: "refused" } },
  { route: "/api/renders/:renderId/audio (sent print, paid)", file: "routes/api.render-audio.ts", kind: "loader", handler: api(apiRenderAudio.loader), path: () => `/api/renders/${paidPrint.renderId}/audio`, params: () => ({ renderId: paidPrint.renderId }), expected: releaseViewers },
  { route: "/api/tracks/:trackId/mixes", file: "routes/api.track-mixes.ts", kind: "loader", handler: api(apiTrackMixes.loader), path: (f) => `/api/tracks/${f.trackId}/mixes`, params: (f) => ({ trackId: f.trackId }), expected: releaseStaff },
  // A form body is not a WAV: staff get 422, nothing is stored.
  { route: "/api/tracks/:trackId/mixes", file: "routes/api.track-mixes.ts", kind: "action", handler: api(apiTrackMixes.action), path: (f) => `/api/tracks/${f.trackId}/mixes`, params: (f) => ({ trackId: f.trackId }), form: { file: "" }, expected: releaseStaff },
  { route: "/api/mixes/:mixId/audio", file: "routes/api.mix-audio.ts", kind: "loader", handler: api(apiMixAudio.loader), path: () => `/api/mixes/${stored.mixId}/audio`, params: () => ({ mixId: stored.mixId }), expected: releaseStaff },
  // The player's audio: a client hears only renders sent to them for review.
  { route: "/renders/:renderId/audio (not sent)", file: "routes/render-audio.tsx", kind: "loader", handler: renderAudio.loader as Handler, path: () => `/renders/${stored.renderId}/audio`, params: () => ({ renderId: stored.renderId }), expected: releaseStaff },
  { route: "/renders/:renderId/audio (sent for review)", file: "routes/render-audio.tsx", kind: "loader", handler: renderAudio.loader as Handler, path: () => `/renders/${reviewed.renderId}/audio`, params: () => ({ renderId: reviewed.renderId }), expected: releaseViewers },
  { route: "…/tracks/:trackId/compare", file: "routes/compare.tsx", kind: "loader", handler: compare.loader as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/compare`, params: trk, expected: releaseViewers },
  // A comment without a time: 400 for whoever may hear the render; a render the viewer may not hear is a 404.
  { route: "…/tracks/:trackId/compare (not sent)", file: "routes/compare.tsx", kind: "action", handler: compare.action as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/compare`, params: trk, form: () => ({ intent: "comment", renderId: stored.renderId, time: "" }), expected: releaseStaff },
  { route: "…/tracks/:trackId/compare (sent for review)", file: "routes/compare.tsx", kind: "action", handler: compare.action as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/compare`, params: trk, form: () => ({ intent: "comment", renderId: reviewed.renderId, time: "" }), expected: releaseViewers },
  { route: "…/tracks/:trackId/review", file: "routes/review.tsx", kind: "loader", handler: review.loader as Handler, path: (f) => `/releases/${f.releaseId}/tracks/${f.trackId}/review`, params: trk, expected: releaseViewers },
  // The review room: every viewer of the release; its steps act only on what the viewer may hear.
  { route: "/releases/:releaseId/room", file: "routes/review-room.tsx", kind: "loader", handler: reviewRoom.loader as Handler, path: (f) => `/releases/${f.releaseId}/room?track=${f.trackId}`, params: rel, expected: releaseViewers },
  { route: "/releases/:releaseId/room (not sent)", file: "routes/review-room.tsx", kind: "action", handler: reviewRoom.action as Handler, path: (f) => `/releases/${f.releaseId}/room?track=${f.trackId}`, params: rel, form: () => ({ intent: "comment", renderId: stored.renderId, time: "" }), expected: releaseStaff },
  { route: "/releases/:releaseId/room (sent for review)", file: "routes/review-room.tsx", kind: "action", handler: reviewRoom.action as Handler, path: (f) => `/releases/${f.releaseId}/room?track=${f.trackId}`, params: rel, form: () => ({ intent: "comment", renderId: reviewed.renderId, time: "" }), expected: releaseViewers },
  // A public endpoint: the session plays no part, the signature is the credential.
  // "allowed" here means an answer that is neither a redirect nor a 404 — and
  // `answers(400)` makes sure it is the 400 for a missing signature, for everyone.
  { route: "/api/payments/webhook", file: "routes/api.payments.webhook.ts", kind: "action", handler: answers(400, paymentsWebhook.action), path: () => "/api/payments/webhook", form: { type: "checkout.session.completed" }, expected: everyone("allowed") },
  // Nothing is delivered in the fixture, so whoever passes the checks gets the
  // returned "nothing delivered yet" answer (allowed); outsiders the thrown 404.
  { route: "/releases/:releaseId/package.zip (unpaid)", file: "routes/release-package.ts", kind: "loader", handler: releasePackage.loader as Handler, path: (f) => `/releases/${f.releaseId}/package.zip`, params: rel, expected: { ...releaseViewers, client: "refused" } },
  { route: "/releases/:releaseId/package.zip (paid)", file: "routes/release-package.ts", kind: "loader", handler: releasePackage.loader as Handler, path: () => `/releases/${paidReleaseId}/package.zip`, params: () => ({ releaseId: paidReleaseId }), expected: releaseViewers },
  { route: "/releases/:releaseId/loudness-report.csv", file: "routes/release-loudness-report.ts", kind: "loader", handler: loudnessReport.loader as Handler, path: (f) => `/releases/${f.releaseId}/loudness-report.csv`, params: rel, expected: releaseViewers },
  // No invoice exists, so each allowed step comes back to the release page with ?invoiceError=…; nothing changes.
  { route: "/releases/:releaseId/invoice (send)", file: "routes/release-invoice.ts", kind: "action", handler: releaseInvoice.action as Handler, path: (f) => `/releases/${f.releaseId}/invoice`, params: rel, form: { intent: "send" }, expected: releaseOwner },
  { route: "/releases/:releaseId/invoice (void)", file: "routes/release-invoice.ts", kind: "action", handler: releaseInvoice.action as Handler, path: (f) => `/releases/${f.releaseId}/invoice`, params: rel, form: { intent: "void" }, expected: releaseOwner },
  { route: "/releases/:releaseId/invoice (pay)", file: "routes/release-invoice.ts", kind: "action", handler: releaseInvoice.action as Handler, path: (f) => `/releases/${f.releaseId}/invoice`, params: rel, form: { intent: "pay" }, expected: releaseBilling },
  { route: "/api/*", file: "routes/api.not-found.ts", kind: "loader", handler: api(apiNotFound.loader), path: () => "/api/nothing", expected: everyone("404") },
  { route: "/api/*", file: "routes/api.not-found.ts", kind: "action", handler: api(apiNotFound.action), path: () => "/api/nothing", form: {}, expected: everyone("404") },
  { route: "/releases/:releaseId/delivery", file: "routes/release-delivery.tsx", kind: "loader", handler: releaseDelivery.loader as Handler, path: (f) => `/releases/${f.releaseId}/delivery`, params: rel, expected: releaseStaff },
  { route: "/releases/:releaseId/delivery", file: "routes/release-delivery.tsx", kind: "action", handler: releaseDelivery.action as Handler, path: (f) => `/releases/${f.releaseId}/delivery`, params: rel, form: { intent: "add-format", name: "" }, expected: releaseStaff },
  // Unconfirmed: staff get the 400 asking to confirm; nothing is deleted.
  { route: "/releases/:releaseId/delivery (delete-format)", file: "routes/release-delivery.tsx", kind: "action", handler: releaseDelivery.action as Handler, path: (f) => `/releases/${f.releaseId}/delivery`, params: rel, form: { intent: "delete-format", formatId: "" }, expected: releaseStaff },
  { route: "/releases/:releaseId/loudness-report", file: "routes/loudness-report.tsx", kind: "loader", handler: loudnessReportPage.loader as Handler, path: (f) => `/releases/${f.releaseId}/loudness-report`, params: rel, expected: releaseViewers },
  { route: "/settings/billing", file: "routes/settings-billing-page.tsx", kind: "loader", handler: settingsBillingPage.loader as Handler, path: () => "/settings/billing", expected: ownerOnly },
  { route: "/settings/billing", file: "routes/settings-billing-page.tsx", kind: "action", handler: settingsBillingPage.action as Handler, path: () => "/settings/billing", form: { currency: "" }, expected: ownerOnly },
];

let stored: StoredRender;

beforeAll(async () => {
  fixture = await createFixture();
  const trackChain = await createChain({ studioId: fixture.studioId, trackId: fixture.trackId, name: "Matrix chain" });
  await createRevision(trackChain.id, { stages: [] }, null);
  trackChainId = trackChain.id;
  stored = await addStoredRender({ studioId: fixture.studioId, trackId: fixture.trackId });
  // A queued render of the stored mix, for the API's render routes (no queue in this file).
  const [revision] = await db("chain_revisions").where({ chain_id: trackChainId }).select("id");
  const [queued] = await db("renders").insert({ mix_id: stored.mixId, chain_revision_id: revision.id, kind: "print" }).returning("id");
  apiRenderId = queued.id;
  reviewed = await addStoredRender({ studioId: fixture.studioId, trackId: fixture.trackId });
  await db("review_requests").insert({ track_id: fixture.trackId, render_id: reviewed.renderId, sent_by: fixture.users.owner.id });
  await storage().put(reviewedTracesKey(), Buffer.from(JSON.stringify({ frameMs: 10, stages: [], shortTermLufs: [] })), { contentType: "application/json" });
  await db("renders").where({ id: reviewed.renderId }).update({ traces_key: reviewedTracesKey() });
  const [paid] = await db("releases").insert({ studio_id: fixture.studioId, client_id: fixture.clientId, title: `Paid single ${fixture.tag}`, kind: "single" }).returning("id");
  paidReleaseId = paid.id;
  await db("invoices").insert({ studio_id: fixture.studioId, release_id: paidReleaseId, number: `M-${fixture.tag}`, currency: "EUR", state: "paid", total_cents: 100, sent_at: db.fn.now(), paid_at: db.fn.now() });
  const [paidTrack] = await db("tracks").insert({ release_id: paidReleaseId, position: 1, title: `Paid track ${fixture.tag}` }).returning("id");
  paidPrint = { ...(await addStoredRender({ studioId: fixture.studioId, trackId: paidTrack.id })), trackId: paidTrack.id };
  await db("review_requests").insert({ track_id: paidTrack.id, render_id: paidPrint.renderId, sent_by: fixture.users.owner.id });
  ({ token: invitationToken } = await createInvitation({ studioId: fixture.studioId, invitedBy: fixture.users.owner.id, email: `invitee-${fixture.tag}@fixture.test`, role: "engineer", clientId: null }));
});
afterAll(async () => {
  // Renders hold their chain revision (NO ACTION), so they go before the studio's cascade.
  if (apiRenderId) await db("renders").where({ id: apiRenderId }).delete();
  if (reviewed) await storage().delete(reviewedTracesKey());
  await reviewed?.cleanup();
  await paidPrint?.cleanup();
  await stored?.cleanup();
  await destroyFixture(fixture);
});

describe("authorisation matrix", () => {
  it("covers every route file in app/routes.ts", () => {
    const files = new Set<string>();
    const walk = (entries: { file: string; children?: unknown[] }[]) => {
      for (const entry of entries) {
        files.add(entry.file);
        if (entry.children) walk(entry.children as { file: string; children?: unknown[] }[]);
      }
    };
    walk(routes as { file: string; children?: unknown[] }[]);
    expect(new Set(cases.map((c) => c.file))).toEqual(files);
  });

  for (const c of cases) {
    it(`${c.kind} ${c.route}`, async () => {
      const actual = {} as Expect;
      for (const persona of PERSONAS) {
        const request = requestAs(fixture, persona, c.path(fixture), c.kind === "action" ? { form: (typeof c.form === "function" ? c.form() : c.form) ?? {} } : {});
        actual[persona] = await outcomeOf(() => c.handler({ request, params: c.params?.(fixture) ?? {}, context: {} }));
      }
      expect(actual).toEqual(c.expected);
    });
  }

  it("answers 404 for a release id that does not exist or is not a uuid", async () => {
    for (const releaseId of ["00000000-0000-4000-8000-000000000000", "not-a-uuid"]) {
      const request = requestAs(fixture, "owner", `/releases/${releaseId}`);
      expect(await outcomeOf(() => release.loader({ request, params: { releaseId }, context: {} } as never))).toBe("404");
    }
  });

  it("answers 404 for a track of another release", async () => {
    const params = { releaseId: fixture.otherReleaseId, trackId: fixture.trackId };
    const request = requestAs(fixture, "owner", `/releases/${params.releaseId}/tracks/${params.trackId}`);
    expect(await outcomeOf(() => track.loader({ request, params, context: {} } as never))).toBe("404");
  });

  it("lists only the client's own releases on a client's dashboard", async () => {
    const request = requestAs(fixture, "client", "/");
    const data = (await dashboard.loader({ request, params: {}, context: {} } as never)) as { releases: { id: string }[] };
    expect(new Set(data.releases.map((r) => r.id))).toEqual(new Set([fixture.releaseId, paidReleaseId]));
    const staffData = (await dashboard.loader({ request: requestAs(fixture, "engineer", "/"), params: {}, context: {} } as never)) as { releases: { id: string }[] };
    expect(new Set(staffData.releases.map((r) => r.id))).toEqual(new Set([fixture.releaseId, fixture.otherReleaseId, paidReleaseId]));
  });

  it("sends a client from the track page to the review room, which lists only the renders sent to them", async () => {
    const load = async (persona: Persona) =>
      ((await track.loader({ request: requestAs(fixture, persona, `/releases/${fixture.releaseId}/tracks/${fixture.trackId}`), params: trk(fixture), context: {} } as never)) as { renders: { id: string }[] }).renders.map((r) => r.id);
    const thrown = await load("client").catch((e: unknown) => e);
    expect((thrown as Response).headers.get("Location")).toBe(`/releases/${fixture.releaseId}/room?track=${fixture.trackId}`);
    const room = (await reviewRoom.loader({ request: requestAs(fixture, "client", `/releases/${fixture.releaseId}/room?track=${fixture.trackId}`), params: rel(fixture), context: {} } as never)) as Awaited<ReturnType<typeof reviewRoom.loader>>;
    expect(room.selected?.versions.map((v) => v.renderId)).toEqual([reviewed.renderId]);
    expect(new Set(await load("engineer"))).toEqual(new Set([reviewed.renderId, stored.renderId, apiRenderId]));
  });

  it("sends a signed-out visitor to sign-in with the way back", async () => {
    const request = requestAs(fixture, "signedOut", `/releases/${fixture.releaseId}`);
    const thrown = await release.loader({ request, params: rel(fixture), context: {} } as never).catch((e: unknown) => e);
    expect(thrown).toBeInstanceOf(Response);
    expect((thrown as Response).headers.get("Location")).toBe(`/sign-in?redirectTo=${encodeURIComponent(`/releases/${fixture.releaseId}`)}`);
  });
});
