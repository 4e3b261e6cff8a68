import { data } from "react-router";
import { processPhoto, readPhotoUpload, savePhoto } from "~/server/photos.server";
import { requireStationEntrant } from "~/server/station-entry.server";
import type { Route } from "./+types/station.photos";

// POST /station/photos: a probe photo from the station tablet (multipart `photo`, with the entry's
// attribution and the time it was taken).
export async function action({ request }: Route.ActionArgs) {
  const upload = await readPhotoUpload(request);
  const when = upload.fields.enteredAt ?? upload.fields.takenAt;
  const { site, entrant } = await requireStationEntrant(request, upload.fields.attribution, when ? Date.parse(when) : NaN);
  const photo = await processPhoto(upload.bytes);
  return data(await savePhoto(site, entrant, photo), { status: 201 });
}

// Entries are posted; a GET is a mistake, said plainly.
export const loader = () => data({ error: "Use POST" }, { status: 405 });
