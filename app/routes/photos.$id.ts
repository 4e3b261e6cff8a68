import { z } from "zod";
import { notFound } from "~/server/guards.server";
import { canSeePhoto, findPhoto, photoResponse } from "~/server/photos.server";
import type { Route } from "./+types/photos.$id";

const PhotoParamsSchema = z.object({
  id: z.uuid(),
  size: z.enum(["thumb"]).optional(),
});

// GET /photos/:id and /photos/:id/thumb: the stored WebP, to those who may see it; anyone else gets 404.
export async function loader({ request, params }: Route.LoaderArgs) {
  const parsed = PhotoParamsSchema.safeParse(params);
  if (!parsed.success) notFound();
  const photo = await findPhoto(parsed.data.id);
  if (!photo || !(await canSeePhoto(request, photo))) notFound();
  return (await photoResponse(photo, parsed.data.size === "thumb" ? "thumb" : "display")) ?? notFound();
}
