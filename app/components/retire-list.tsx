import { useTranslation } from "react-i18next";
import { Form } from "react-router";

/**
 * Things a manager can take out of use (station tablets, API tokens): each with its name, a detail,
 * when it was last used, and one button posting `intent` with its id.
 */
export function RetireList({
  items,
  intent,
  idField,
  buttonLabel,
}: {
  items: { id: string; name: string; detail?: string; lastUsedAt: Date | string | null }[];
  intent: string;
  idField: string;
  buttonLabel: string;
}) {
  const { t, i18n } = useTranslation();
  return (
    <ul className="grid gap-2">
      {items.map((item) => (
        <li key={item.id} className="flex flex-wrap items-center justify-between gap-3 rounded-xl bg-frost px-4 py-2">
          <span>
            <span className="font-bold">{item.name}</span>
            {item.detail ? (
              <>
                {" · "}
                <code>{item.detail}</code>
              </>
            ) : null}
            {" · "}
            {item.lastUsedAt ? t("station.lastSeen", { when: new Date(item.lastUsedAt).toLocaleString(i18n.language) }) : t("station.never")}
          </span>
          <Form method="post">
            <input type="hidden" name="intent" value={intent} />
            <input type="hidden" name={idField} value={item.id} />
            <button type="submit" className="btn-quiet min-h-12 px-3 text-sm">
              {buttonLabel}
            </button>
          </Form>
        </li>
      ))}
    </ul>
  );
}
