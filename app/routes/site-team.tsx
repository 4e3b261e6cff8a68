import { useTranslation } from "react-i18next";
import { data, Form, useNavigation } from "react-router";
import { z } from "zod";
import { SelectField } from "~/components/controls";
import { Field, Notice } from "~/components/frame";
import { fieldErrors, text } from "~/lib/forms";
import { PinSchema } from "~/lib/passwords";
import { inviteToSite } from "~/server/accounts.server";
import { can, isUuid, notFound, requireRole, type Role } from "~/server/guards.server";
import { changeRole, findMember, mayChangeAccount, listPendingInvitations, listTeam, revokeInvitation, setActive, setPin } from "~/server/team.server";
import type { Route } from "./+types/site-team";

export const meta: Route.MetaFunction = () => [{ title: "Team · Chillwright" }];

const roles = ["cook", "manager", "qa", "admin"] as const;
const userId = z.string().refine(isUuid);

const TeamActionSchema = z.discriminatedUnion("intent", [
  z.object({
    intent: z.literal("invite"),
    email: z.email("forms.email").max(200),
    name: text().min(1, "forms.required").max(120),
    role: z.enum(roles),
  }),
  z.object({ intent: z.literal("changeRole"), userId, role: z.enum(roles) }),
  z.object({ intent: z.literal("setPin"), userId, pin: PinSchema }),
  z.object({ intent: z.literal("deactivate"), userId }),
  z.object({ intent: z.literal("reactivate"), userId }),
  z.object({ intent: z.literal("revokeInvitation"), invitationId: z.string().refine(isUuid) }),
]);

type ActionResult = { ok: boolean; intent: string; target?: string; message?: string; values?: Record<string, string>; errors: Record<string, string> };
const fail = (r: Omit<ActionResult, "ok">, status = 400) => data<ActionResult>({ ok: false, ...r }, { status });

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, site, role } = await requireRole(request, can.manageTeam, params.siteId);
  const [team, pending] = await Promise.all([listTeam(site.id), listPendingInvitations(site.id)]);
  return { siteName: site.name, me: user.id, myRole: role, team, pending };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { user, site, role: myRole } = await requireRole(request, can.manageTeam, params.siteId);
  const form = Object.fromEntries(await request.formData()) as Record<string, string>;
  const parsed = TeamActionSchema.safeParse(form);
  if (!parsed.success) return fail({ intent: form.intent ?? "", target: form.userId, values: form, errors: fieldErrors(parsed.error) });
  const input = parsed.data;
  const adminOnly = (r: Role) => r === "admin" && myRole !== "admin";

  if (input.intent === "invite") {
    if (adminOnly(input.role)) return fail({ intent: input.intent, values: form, errors: { role: "team.adminOnly" } }, 403);
    const result = await inviteToSite(user, site, input);
    if (!result.ok) return fail({ intent: input.intent, values: form, errors: { email: `team.${result.reason}` } });
    return data<ActionResult>({ ok: true, intent: input.intent, message: result.added ? "team.saved" : "team.invited", values: { email: input.email }, errors: {} });
  }
  if (input.intent === "revokeInvitation") {
    if (!(await revokeInvitation(user, site, input.invitationId))) notFound();
    return data<ActionResult>({ ok: true, intent: input.intent, message: "team.saved", errors: {} });
  }

  const member = await findMember(site, input.userId);
  if (!member) notFound();
  const self = member.userId === user.id;
  if (input.intent === "changeRole") {
    if (self) return fail({ intent: input.intent, target: member.userId, errors: { form: "team.notSelf" } });
    if (adminOnly(input.role) || adminOnly(member.role)) return fail({ intent: input.intent, target: member.userId, errors: { form: "team.adminOnly" } }, 403);
    await changeRole(user, site, member, input.role);
  } else if (input.intent === "setPin") {
    if (adminOnly(member.role) || !(await mayChangeAccount(user, member.userId))) return fail({ intent: input.intent, target: member.userId, errors: { form: "team.adminOnly" } }, 403);
    await setPin(user, site, member.userId, input.pin);
    return data<ActionResult>({ ok: true, intent: input.intent, target: member.userId, message: "team.pinSet", values: { name: member.name }, errors: {} });
  } else {
    if (self) return fail({ intent: input.intent, target: member.userId, errors: { form: "team.notSelf" } });
    if (adminOnly(member.role) || !(await mayChangeAccount(user, member.userId))) return fail({ intent: input.intent, target: member.userId, errors: { form: "team.adminOnly" } }, 403);
    await setActive(user, site, member.userId, input.intent === "reactivate");
  }
  return data<ActionResult>({ ok: true, intent: input.intent, target: member.userId, message: "team.saved", errors: {} });
}

export default function SiteTeam({ loaderData, actionData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { siteName, me, myRole, team, pending } = loaderData;
  const busy = useNavigation().state !== "idle";
  const result = actionData as ActionResult | undefined;
  const inviteErrors = result?.intent === "invite" ? result.errors : {};
  const roleOptions = roles.filter((r) => r !== "admin" || myRole === "admin").map((r) => ({ value: r, label: t(`roles.${r}`) }));
  return (
    <div className="grid gap-6">
      <h1 className="text-2xl font-extrabold tracking-tight">{t("team.title", { site: siteName })}</h1>
      {result?.ok && result.message ? <Notice tone="ok">{t(result.message, { email: result.values?.email, name: result.values?.name })}</Notice> : null}
      {result && !result.ok && result.errors.form ? <Notice tone="error">{t(result.errors.form)}</Notice> : null}

      <section className="card overflow-x-auto" aria-labelledby="people">
        <h2 id="people" className="mb-4 text-lg font-extrabold">
          {t("team.people")}
        </h2>
        <table className="w-full min-w-[720px] text-left">
          <thead>
            <tr className="border-b border-line text-sm text-ink-soft">
              <th className="py-2 pr-3">{t("team.name")}</th>
              <th className="py-2 pr-3">{t("team.role")}</th>
              <th className="py-2 pr-3">{t("team.status")}</th>
              <th className="py-2">{t("team.actions")}</th>
            </tr>
          </thead>
          <tbody>
            {team.map((p) => {
              const locked = myRole !== "admin" && p.role === "admin";
              const pinError = result?.intent === "setPin" && result.target === p.userId ? result.errors.pin : undefined;
              return (
                <tr key={p.userId} className="border-b border-line align-top last:border-0">
                  <td className="py-3 pr-3">
                    <p className="font-bold">{p.name}</p>
                    <p className="text-sm text-ink-soft">{p.email}</p>
                  </td>
                  <td className="py-3 pr-3">
                    {p.userId === me || locked ? (
                      <span className="font-semibold">{t(`roles.${p.role}`)}</span>
                    ) : (
                      <Form method="post" className="flex items-center gap-2">
                        <input type="hidden" name="intent" value="changeRole" />
                        <input type="hidden" name="userId" value={p.userId} />
                        <label className="sr-only" htmlFor={`role-${p.userId}`}>
                          {t("team.changeRole")}: {p.name}
                        </label>
                        <select id={`role-${p.userId}`} name="role" defaultValue={p.role} className="field min-h-12 w-auto">
                          {roleOptions.map((o) => (
                            <option key={o.value} value={o.value}>
                              {o.label}
                            </option>
                          ))}
                        </select>
                        <button type="submit" className="btn-quiet min-h-12 px-3 text-sm" disabled={busy}>
                          {t("team.changeRole")}
                        </button>
                      </Form>
                    )}
                  </td>
                  <td className="py-3 pr-3 text-sm">
                    <span className={`rounded-lg px-2 py-1 font-bold ${p.active ? "bg-pine-light text-pine" : "bg-frost-deep text-ink-soft"}`}>
                      {p.active ? t("team.active") : t("team.inactive")}
                    </span>
                    {p.pinLocked ? <span className="ml-2 rounded-lg bg-ember-light px-2 py-1 font-bold text-ember">{t("team.pinLocked")}</span> : null}
                    {!p.hasPin ? <span className="ml-2 text-ink-soft">{t("team.noPin")}</span> : null}
                  </td>
                  <td className="py-3">
                    {locked ? null : (
                      <div className="flex flex-wrap items-start gap-2">
                        <Form method="post" className="flex items-start gap-2">
                          <input type="hidden" name="intent" value="setPin" />
                          <input type="hidden" name="userId" value={p.userId} />
                          <div>
                            <label className="sr-only" htmlFor={`pin-${p.userId}`}>
                              {t("team.newPin")}: {p.name}
                            </label>
                            <input
                              id={`pin-${p.userId}`}
                              name="pin"
                              inputMode="numeric"
                              pattern="\d{4,6}"
                              autoComplete="off"
                              placeholder="PIN"
                              className="field min-h-12 w-28"
                              aria-invalid={pinError ? true : undefined}
                            />
                            {pinError ? <p className="field-error">{t(pinError)}</p> : null}
                          </div>
                          <button type="submit" className="btn-quiet min-h-12 px-3 text-sm" disabled={busy}>
                            {t("team.setPin")}
                          </button>
                        </Form>
                        {p.userId === me ? null : (
                          <Form method="post">
                            <input type="hidden" name="intent" value={p.active ? "deactivate" : "reactivate"} />
                            <input type="hidden" name="userId" value={p.userId} />
                            <button type="submit" className={`${p.active ? "btn-quiet text-ember" : "btn-quiet"} min-h-12 px-3 text-sm`} disabled={busy}>
                              {p.active ? t("team.deactivate") : t("team.reactivate")}
                            </button>
                          </Form>
                        )}
                      </div>
                    )}
                  </td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </section>

      <section className="card max-w-2xl" aria-labelledby="invite">
        <h2 id="invite" className="mb-4 text-lg font-extrabold">
          {t("team.invite")}
        </h2>
        <Form method="post">
          <input type="hidden" name="intent" value="invite" />
          <div className="grid gap-x-4 sm:grid-cols-2">
            <Field label={t("team.name")} name="name" required defaultValue={result?.intent === "invite" && !result.ok ? result.values?.name : undefined} error={inviteErrors.name && t(inviteErrors.name)} />
            <Field label={t("team.email")} name="email" type="email" required defaultValue={result?.intent === "invite" && !result.ok ? result.values?.email : undefined} error={inviteErrors.email && t(inviteErrors.email)} />
          </div>
          <SelectField label={t("team.role")} name="role" defaultValue="cook" options={roleOptions} error={inviteErrors.role && t(inviteErrors.role)} />
          <button type="submit" className="btn-primary" disabled={busy}>
            {t("team.inviteSubmit")}
          </button>
        </Form>
        {pending.length > 0 ? (
          <div className="mt-6">
            <h3 className="mb-2 font-bold">{t("team.pending")}</h3>
            <ul className="grid gap-2">
              {pending.map((inv) => (
                <li key={inv.id} className="flex flex-wrap items-center justify-between gap-2 rounded-xl bg-frost px-4 py-2">
                  <span>
                    <span className="font-bold">{inv.name}</span> · {inv.email} · {t(`roles.${inv.role}`)} · {t("team.expires", { when: new Date(inv.expiresAt).toISOString().slice(0, 10) })}
                  </span>
                  <Form method="post">
                    <input type="hidden" name="intent" value="revokeInvitation" />
                    <input type="hidden" name="invitationId" value={inv.id} />
                    <button type="submit" className="btn-quiet min-h-12 px-3 text-sm">
                      {t("team.revoke")}
                    </button>
                  </Form>
                </li>
              ))}
            </ul>
          </div>
        ) : null}
      </section>
    </div>
  );
}
