import nodemailer from "nodemailer";
import { env } from "./env.server";

const transport = nodemailer.createTransport({
  host: env.SMTP_HOST,
  port: env.SMTP_PORT,
  secure: env.SMTP_SECURE,
  auth: env.SMTP_USER ? { user: env.SMTP_USER, pass: env.SMTP_PASSWORD } : undefined,
  // maildev and most in-house relays on loopback have no certificate to offer.
  ignoreTLS: !env.SMTP_SECURE && env.SMTP_HOST === "127.0.0.1",
  // Well inside the alert queue's job expiry (120 s): a hung server fails the send, which is retried.
  connectionTimeout: 10_000,
  greetingTimeout: 10_000,
  socketTimeout: 30_000,
});

const escapeHtml = (s: string) =>
  s.replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[c]!);

/** A plain, readable message with one call to action; text and HTML carry the same words. */
export async function sendMail(input: { to: string; subject: string; lines: string[]; action?: { label: string; url: string }; attachments?: { filename: string; content: Buffer; contentType: string }[] }) {
  const text = [...input.lines, ...(input.action ? ["", `${input.action.label}: ${input.action.url}`] : [])].join("\n");
  const html = `<div style="font-family:sans-serif;font-size:16px;color:#0f2430;max-width:560px">
${input.lines.map((l) => `<p>${escapeHtml(l)}</p>`).join("\n")}
${input.action ? `<p><a href="${escapeHtml(input.action.url)}" style="display:inline-block;background:#0a6781;color:#fff;padding:12px 20px;border-radius:10px;text-decoration:none;font-weight:bold">${escapeHtml(input.action.label)}</a></p><p style="font-size:13px;color:#3b5361">${escapeHtml(input.action.url)}</p>` : ""}
<p style="font-size:13px;color:#3b5361">Chillwright</p></div>`;
  await transport.sendMail({ from: env.MAIL_FROM, to: input.to, subject: input.subject, text, html, attachments: input.attachments });
}
