import { index, layout, prefix, route, type RouteConfig } from "@react-router/dev/routes";

export default [
  index("routes/home.tsx"),
  route("signin", "routes/signin.tsx"),
  route("signout", "routes/signout.ts"),
  route("forgot-password", "routes/forgot-password.tsx"),
  route("reset-password/:token", "routes/reset-password.tsx"),
  route("invite/:token", "routes/invite.tsx"),
  route("language", "routes/language.ts"),
  route("auth/*", "routes/auth.ts"),
  route("healthz", "routes/healthz.ts"),
  route("api/v1/predict", "routes/api.v1.predict.ts"),
  route("api/v1/batches", "routes/api.v1.batches.ts"),
  route("api/v1/batches/:id/readings", "routes/api.v1.batches.readings.ts"),
  route("api/v1/batches/:id/actions", "routes/api.v1.batches.actions.ts"),
  route("api/v1/photos", "routes/api.v1.photos.ts"),
  route("photos/:id/:size?", "routes/photos.$id.ts"),
  route("station", "routes/station.tsx"),
  route("station/batches/new", "routes/station-batch-new.tsx"),
  route("station/batches/:batchId", "routes/station-batch.tsx"),
  layout("routes/shell.tsx", [
    route("account", "routes/account.tsx"),
    route("sites", "routes/sites.tsx"),
    ...prefix("sites/:siteId", [
      index("routes/site-home.tsx"),
      route("settings", "routes/site-settings.tsx"),
      route("team", "routes/site-team.tsx"),
      route("station-setup", "routes/station-setup.tsx"),
      route("api-tokens", "routes/site-api-tokens.tsx"),
    ]),
  ]),
] satisfies RouteConfig;
