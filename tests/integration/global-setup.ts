import { APP_URL } from "../helpers/client";

// Integration tests speak HTTP to the app that `npm test` started against the test database.
export default async function setup() {
  const res = await fetch(`${APP_URL}/healthz`).catch(() => null);
  if (!res?.ok) throw new Error(`The app is not answering at ${APP_URL}; run the suite through \`npm test\`.`);
}
