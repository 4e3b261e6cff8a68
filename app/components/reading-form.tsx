import { useEffect, useRef, useState } from "react";
import { useDropzone } from "react-dropzone";
import { useTranslation } from "react-i18next";
import { useRevalidator } from "react-router";
import { flushOutbox, listOutbox, onOutboxChange, saveToOutbox, type OutboxEntry } from "~/lib/outbox";
import { Field, Notice } from "./frame";
import { TemperatureKeypad } from "./temp-keypad";

const newId = () => (typeof globalThis.crypto?.randomUUID === "function" ? crypto.randomUUID() : `${Date.now()}-${Math.random().toString(36).slice(2)}-${Math.random().toString(36).slice(2)}`);

/** Entries waiting on this tablet, for a batch or for all; kept live as the outbox changes. */
export function usePending(batchId?: string) {
  const [pending, setPending] = useState<OutboxEntry[]>([]);
  useEffect(() => {
    let live = true;
    const load = () => listOutbox().then((all) => live && setPending(batchId ? all.filter((e) => e.batchId === batchId) : all));
    load();
    const off = onOutboxChange(load);
    const retry = () => flushOutbox();
    window.addEventListener("online", retry);
    const timer = setInterval(retry, 10_000);
    return () => {
      live = false;
      off();
      window.removeEventListener("online", retry);
      clearInterval(timer);
    };
  }, [batchId]);
  return pending;
}

export function PendingNotice({ count }: { count: number }) {
  const { t } = useTranslation();
  if (count === 0) return null;
  return (
    <Notice tone="warn">
      <span data-testid="pending">{t("outbox.pending", { count })}</span>
    </Notice>
  );
}

/**
 * A reading as the cook enters it: the value on the keypad, the time (now unless changed), the probe
 * and a photo (camera on a tablet, or dropped in). It is saved on the tablet first, then sent.
 */
export function ReadingForm({
  batchId,
  unit,
  attribution,
  kind,
  corrects,
}: {
  batchId: string;
  unit: "F" | "C";
  attribution: string;
  kind: "reading" | "reheat";
  /** When set, the entry corrects this reading (with a reason, at its time). */
  corrects?: { readingId: string; takenAt: number; label: string };
}) {
  const { t } = useTranslation();
  const revalidator = useRevalidator();
  const [formKey, setFormKey] = useState(newId);
  const [errors, setErrors] = useState<Record<string, string>>({});
  const [kept, setKept] = useState("");
  const [photo, setPhoto] = useState<File | null>(null);
  const [saved, setSaved] = useState<"sent" | "queued" | null>(null);
  const [warnings, setWarnings] = useState<string[]>([]);
  const pending = usePending(batchId);
  const formRef = useRef<HTMLFormElement>(null);
  const { getRootProps, getInputProps, isDragActive } = useDropzone({
    accept: { "image/*": [] },
    multiple: false,
    onDrop: (files) => setPhoto(files[0] ?? null),
  });

  async function submit(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const fd = new FormData(e.currentTarget);
    const raw = String(fd.get("value") ?? "").replace(",", ".");
    const value = Number(raw);
    if (raw === "" || !Number.isFinite(value)) {
      setErrors({ value: t("outbox.enterTemperature") });
      return;
    }
    const when = String(fd.get("takenAt") ?? "");
    const entry: OutboxEntry = {
      clientId: formKey,
      batchId,
      savedAt: Date.now(),
      body: {
        clientId: formKey,
        value,
        unit,
        enteredAt: new Date().toISOString(),
        takenAt: corrects ? new Date(corrects.takenAt).toISOString() : (when ? new Date(when) : new Date()).toISOString(),
        probe: String(fd.get("probe") ?? "") || undefined,
        kind,
        attribution,
        corrects: corrects ? { readingId: corrects.readingId, reason: String(fd.get("reason") ?? "") } : undefined,
      },
      photo: photo ?? undefined,
    };
    await saveToOutbox(entry);
    setErrors({});
    setPhoto(null);
    setKept("");
    setFormKey(newId());
    const { rejected, warnings } = await flushOutbox();
    setWarnings(warnings.get(entry.clientId) ?? []);
    const mine = rejected.find((r) => r.entry.clientId === entry.clientId);
    if (mine) {
      // Refused: nothing was stored; the value comes back to the field with the reason.
      setErrors(mine.errors);
      setKept(String(entry.body.value));
      setSaved(null);
      return;
    }
    const still = (await listOutbox()).some((x) => x.clientId === entry.clientId);
    setSaved(still ? "queued" : "sent");
    if (!still) revalidator.revalidate();
  }

  useEffect(() => {
    // Entries sent in the background refresh the page's record.
    if (pending.length === 0 && saved === "queued") {
      setSaved("sent");
      revalidator.revalidate();
    }
  }, [pending.length, saved, revalidator]);

  return (
    <form ref={formRef} onSubmit={submit} className="flex w-full flex-col items-center gap-3" key={formKey}>
      <PendingNotice count={pending.length} />
      {saved === "sent" ? <Notice tone="ok">{t("outbox.sent")}</Notice> : null}
      {warnings.includes("risingTemperature") ? <Notice tone="warn">{t("batch.rising")}</Notice> : null}
      {errors.attribution || errors.request || errors.batch ? <Notice tone="error">{errors.attribution ?? errors.request ?? errors.batch}</Notice> : null}
      <TemperatureKeypad name="value" unit={unit} defaultValue={kept} label={kind === "reheat" ? t("batch.reheatTemperature") : t("batch.coreTemperature")} error={errors.value} />
      {corrects ? (
        <>
          <p className="w-full font-bold">{t("batch.correcting", { reading: corrects.label })}</p>
          <Field label={t("batch.correctionReason")} name="reason" required error={errors["corrects.reason"]} />
        </>
      ) : (
        <Field label={t("batch.takenAt")} name="takenAt" type="datetime-local" error={errors.takenAt} hint={t("batch.takenAtHint")} />
      )}
      <Field label={t("batch.probe")} name="probe" autoComplete="off" />
      <div {...getRootProps({ className: `w-full cursor-pointer rounded-xl border-2 border-dashed px-4 py-4 text-center ${isDragActive ? "border-glacier bg-glacier-light" : "border-line bg-frost"}` })}>
        <input {...getInputProps({ capture: "environment", "aria-label": t("outbox.photo") } as Parameters<typeof getInputProps>[0])} />
        <p className="font-bold">{photo ? t("outbox.photoChosen", { name: photo.name }) : t("outbox.photoHint")}</p>
      </div>
      <button type="submit" className="btn-primary min-h-16 w-full text-lg">
        {kind === "reheat" ? t("batch.saveReheat") : t("batch.save")}
      </button>
    </form>
  );
}
