// The layer rules of DEVELOPERS.md ("Layers"), checked by `npm run validate`.
// Every rule is an error: an upward or circular import fails the gate.

// app/lib holds two layers: the floor (infrastructure and pure helpers, which
// models use) and services (modules that call models: access checks, views,
// form handling, upload, delivery making). These are the services; every
// other module of app/lib is floor and imports no model.
const services = [
  "^app/lib/api(-access|-paging|-views)?\\.server\\.ts$",
  "^app/lib/auth\\.server\\.ts$",
  "^app/lib/billing/payment-events\\.server\\.ts$",
  "^app/lib/(chain-access|release-form|track-form|render-access|render-views|upload)\\.server\\.ts$",
  "^app/lib/compare/chain-changes\\.ts$",
  "^app/lib/delivery/make-delivery\\.server\\.ts$",
  "^app/lib/review/page-action\\.server\\.ts$",
  // A query module (the one visibility rule, SQL) that models build on; it belongs in app/models.
  "^app/lib/render-visibility\\.server\\.ts$",
];
/** @type {import('dependency-cruiser').IConfiguration} */
module.exports = {
  forbidden: [
    {
      name: "no-circular",
      severity: "error",
      comment: "A cycle makes two modules one; split out what both need, or call one way.",
      from: {},
      to: { circular: true },
    },
    {
      name: "dsp-stands-alone",
      severity: "error",
      comment: "dsp/ is pure TypeScript: it imports nothing outside dsp/ but npm packages and Node's own modules.",
      from: { path: "^dsp/" },
      to: { pathNot: ["^dsp/", "^node_modules/"], dependencyTypesNot: ["core"] },
    },
    {
      name: "dsp-testing-stays-out-of-the-renderer",
      severity: "error",
      comment: "dsp/testing/ (signals, the seeded generator, the reference meter) is for tests, the bench and the seeds, never for the renderer itself.",
      from: { path: "^dsp/", pathNot: ["^dsp/testing/", "\\.test\\.ts$"] },
      to: { path: "^dsp/testing/" },
    },
    {
      name: "tests-and-bench-on-top",
      severity: "error",
      comment: "tests/ and bench/ sit on top: nothing imports them, and neither imports the other (what both need is in harness/ or dsp/testing/).",
      from: { pathNot: "^tests/" },
      to: { path: "^tests/" },
    },
    {
      name: "bench-on-top",
      severity: "error",
      from: { pathNot: "^bench/" },
      to: { path: "^bench/" },
    },
    {
      name: "harness-for-tests-and-bench",
      severity: "error",
      comment: "harness/ (fixtures, a worker process, test WAVs) is used by tests and the bench, never by the product or the seeds.",
      from: { pathNot: ["^tests/", "^bench/", "^harness/"] },
      to: { path: "^harness/" },
    },
    {
      name: "app-imports-no-scripts-or-seeds",
      severity: "error",
      from: { path: ["^app/", "^dsp/"] },
      to: { path: ["^scripts/", "^db/seeds/", "^examples/"] },
    },
    {
      name: "only-routes-import-routes",
      severity: "error",
      comment: "Route modules are the top of the app; nothing below imports them.",
      from: { path: "^app/", pathNot: "^app/routes/" },
      to: { path: "^app/routes/" },
    },
    {
      name: "components-stay-in-the-browser",
      severity: "error",
      comment: "Components import no server code, no models, no jobs and no routes.",
      from: { path: "^app/components/" },
      to: { path: ["\\.server\\.tsx?$", "^app/models/", "^app/jobs/", "^app/routes/"], dependencyTypesNot: ["type-only"] },
    },
    {
      name: "server-code-imports-no-components",
      severity: "error",
      comment: "Models, services and jobs hand data up; what a component and the server share (a type, a formatter) lives in app/lib.",
      from: { path: ["^app/models/", "^app/lib/", "^app/jobs/"] },
      to: { path: ["^app/components/", "^app/routes/"] },
    },
    {
      name: "models-call-down",
      severity: "error",
      comment: "Models import no routes, components or jobs; queueing goes through the queue service, called one way.",
      from: { path: "^app/models/" },
      to: { path: ["^app/routes/", "^app/components/", "^app/jobs/"] },
    },
    {
      name: "lib-floor-knows-no-models",
      severity: "error",
      comment: "Modules of app/lib that are not services sit under the models: they import no model and no service.",
      from: { path: "^app/lib/", pathNot: services },
      to: { path: ["^app/models/", ...services] },
    },
    {
      name: "models-call-no-services",
      severity: "error",
      comment: "Services call models, not the other way round (the visibility query excepted until it moves into app/models).",
      from: { path: "^app/models/" },
      to: { path: services.slice(0, -1) },
    },
    {
      name: "infrastructure-knows-no-models",
      severity: "error",
      comment: "db, env, storage, mail, payments and the queue are the floor: they import no models, services, components or routes.",
      from: { path: ["^app/lib/(db|env)\\.server\\.ts$", "^app/lib/(storage|mail|payments)/", "^app/jobs/queue\\.server\\.ts$"] },
      to: { path: ["^app/models/", "^app/routes/", "^app/components/", "^app/lib/(?!(db|env)\\.server\\.ts$|storage/|mail/|payments/)"] },
    },
  ],
  options: {
    doNotFollow: { path: "node_modules" },
    exclude: { path: ["^node_modules/", "^build/", "^\\.react-router/", "^\\.data/"] },
    tsConfig: { fileName: "tsconfig.json" },
    tsPreCompilationDeps: true,
    enhancedResolveOptions: { exportsFields: ["exports"], conditionNames: ["import", "require", "node", "default"], extensions: [".ts", ".tsx", ".js", ".mjs", ".cjs", ".json"] },
    skipAnalysisNotInRules: true,
  },
};
