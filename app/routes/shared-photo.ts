import { z } from "zod";
import { findPhoto, photoResponse } from "~/server/photos.server";
import { isPhotoInShare, openShare, refuseShareWrite } from "~/server/share-links.server";
import type { Route } from "./+types/shared-photo";

const PhotoParamsSchema = z.object({ id: z.uuid(), size: z.enum(["thumb"]).optional() });

// GET /shared/:token/photos/:id and …/thumb: only a photo of a reading of a batch the link covers.
export async function loader({ request, params }: Route.LoaderArgs) {
  const share = await openShare(request, params.token, "photo", "file");
  const parsed = PhotoParamsSchema.safeParse({ id: params.id, size: params.size });
  if (!parsed.success || !(await isPhotoInShare(share, parsed.data.id))) return share.refuse(404, "Not found");
  const photo = await findPhoto(parsed.data.id);
  const res = photo ? await photoResponse(photo, parsed.data.size === "thumb" ? "thumb" : "display") : null;
  if (!res) return share.refuse(404, "Not found");
  await share.allow();
  return res;
}

export const action = ({ request, params }: Route.ActionArgs) => refuseShareWrite(request, params.token, "photo", "file");
