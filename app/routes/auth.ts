import { handleAuth } from "~/server/auth.server";
import type { Route } from "./+types/auth";

// Auth.js handles everything under /auth: csrf, session, the credentials callback.
export const loader = ({ request }: Route.LoaderArgs) => handleAuth(request);
export const action = ({ request }: Route.ActionArgs) => handleAuth(request);
