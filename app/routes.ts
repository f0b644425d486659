import { type RouteConfig, index, layout, prefix, route } from "@react-router/dev/routes";

// Every route, explicitly; files under routes/ that are not listed are not routes.
export default [
  route("sign-in", "routes/sign-in.tsx"),
  route("sign-out", "routes/sign-out.tsx"),
  route("invitations/:token", "routes/invitation.tsx"),
  // The JSON API: resource routes, signed in by a bearer token or the session cookie.
  ...prefix("api", [
    route("releases", "routes/api.releases.ts"),
    route("releases/:releaseId/tracks", "routes/api.release-tracks.ts"),
    route("chains", "routes/api.chains.ts"),
    route("chains/:chainId", "routes/api.chain.ts"),
    route("chains/:chainId/revisions", "routes/api.chain-revisions.ts"),
    route("renders", "routes/api.renders.ts"),
    route("renders/:renderId", "routes/api.render.ts"),
    route("renders/:renderId/cancel", "routes/api.render-cancel.ts"),
    route("renders/:renderId/traces", "routes/api.render-traces.ts"),
    route("renders/:renderId/audio", "routes/api.render-audio.ts"),
    route("tracks/:trackId/mixes", "routes/api.track-mixes.ts"),
    route("mixes/:mixId/audio", "routes/api.mix-audio.ts"),
    route("*", "routes/api.not-found.ts"),
  ]),
  // Signed-in pages share the workspace layout with its navigation.
  layout("routes/workspace.tsx", [
    index("routes/dashboard.tsx"),
    ...prefix("releases", [
      index("routes/releases.tsx"),
      route("new", "routes/release-new.tsx"),
      route(":releaseId", "routes/release.tsx"),
      route(":releaseId/edit", "routes/release-edit.tsx"),
      route(":releaseId/tracks/new", "routes/track-new.tsx"),
      route(":releaseId/tracks/:trackId", "routes/track.tsx"),
      route(":releaseId/tracks/:trackId/edit", "routes/track-edit.tsx"),
      route(":releaseId/tracks/:trackId/mixes", "routes/mix-upload.ts"),
      route(":releaseId/tracks/:trackId/mixes/:mixId/download", "routes/download.mix.ts"),
      route(":releaseId/tracks/:trackId/renders/new", "routes/render-new.tsx"),
      route(":releaseId/tracks/:trackId/renders/:renderId", "routes/render.tsx"),
      route(":releaseId/tracks/:trackId/renders/:renderId/progress", "routes/render-progress.ts"),
      route(":releaseId/tracks/:trackId/renders/:renderId/download", "routes/download.render.ts"),
      route(":releaseId/tracks/:trackId/chains/new", "routes/chain-new.tsx"),
    ]),
    route("team", "routes/team.tsx"),
    route("settings", "routes/settings.tsx"),
    route("settings/tokens", "routes/settings-tokens.tsx"),
    route("templates", "routes/templates.tsx"),
    route("chains/:chainId", "routes/chain.tsx"),
  ]),
] satisfies RouteConfig;
