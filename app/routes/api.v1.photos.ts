import { data } from "react-router";
import { z } from "zod";
import { apiErrors, entrantOf, entrySiteIds, siteForStart } from "~/server/api-batches.server";
import { requireApiCaller } from "~/server/api-tokens.server";
import { processPhoto, readPhotoUpload, savePhoto } from "~/server/photos.server";
import type { Route } from "./+types/api.v1.photos";

const PhotoUploadSchema = z.object({
  siteId: z.uuid("siteId must be the id of a site").optional(),
});

// POST /api/v1/photos: a photo of a probe reading (multipart field `photo`, or the image as the body).
export async function action({ request }: Route.ActionArgs) {
  const caller = await requireApiCaller(request);
  if (request.method !== "POST") return data({ error: "Use POST" }, { status: 405 });
  // Refused before the body is read: nobody uploads 12 MB only to learn they may not.
  if (!entrySiteIds(caller).length) return data({ error: "Your role at this site does not make entries" }, { status: 403 });
  const upload = await readPhotoUpload(request);
  const parsed = PhotoUploadSchema.safeParse(upload.fields);
  if (!parsed.success) return data({ errors: apiErrors(parsed.error) }, { status: 400 });
  const site = await siteForStart(caller, parsed.data.siteId);
  const photo = await processPhoto(upload.bytes);
  return data(await savePhoto(site, entrantOf(caller), photo), { status: 201 });
}

export const loader = () => data({ error: "Use POST" }, { status: 405 });
