import { MAILDEV_URL } from "./client";

type Mail = { id: string; subject: string; text: string; html: string; to: { address: string }[]; time: string };

/** Waits for the newest e-mail to an address in maildev (real SMTP, read back through its REST API). */
export async function waitForMail(to: string, { after = 0, timeoutMs = 10_000 } = {}): Promise<Mail> {
  const end = Date.now() + timeoutMs;
  while (Date.now() < end) {
    const res = await fetch(`${MAILDEV_URL}/api/email`);
    const all = (await res.json()) as Mail[];
    const mine = all.filter((m) => m.to.some((t) => t.address.toLowerCase() === to.toLowerCase()) && Date.parse(m.time) >= after - 1500 /* maildev keeps whole seconds */);
    if (mine.length) return mine[mine.length - 1];
    await new Promise((r) => setTimeout(r, 150));
  }
  throw new Error(`no e-mail to ${to} within ${timeoutMs} ms`);
}

export async function mailsTo(to: string): Promise<Mail[]> {
  const all = (await (await fetch(`${MAILDEV_URL}/api/email`)).json()) as Mail[];
  return all.filter((m) => m.to.some((t) => t.address.toLowerCase() === to.toLowerCase()));
}

export function linkIn(mail: Mail, path: string) {
  const match = new RegExp(`https?://[^\\s"<]+${path}[^\\s"<]*`).exec(mail.text);
  if (!match) throw new Error(`no ${path} link in: ${mail.text}`);
  return new URL(match[0]).pathname;
}
