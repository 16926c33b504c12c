import { ROLE_DESCRIPTIONS, isWorkshopRole } from "../../shared/workshop/roles";

/** Escapes text for an HTML body. */
function h(text: string): string {
  return text.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);
}

function layout(body: string): string {
  return `<!doctype html><html><body style="font-family: sans-serif; color: #1d2327; max-width: 36rem">${body}<p style="color:#5b6470;font-size:12px">Sent by Panelproof, the panel test bench.</p></body></html>`;
}

export function invitationMail(input: { workshopName: string; inviterName: string; role: string; url: string }) {
  const what = isWorkshopRole(input.role) ? ROLE_DESCRIPTIONS[input.role] : "";
  const subject = `${input.inviterName} invites you to the ${input.workshopName} workshop on Panelproof`;
  const text = [
    `${input.inviterName} invites you to join the workshop "${input.workshopName}" as ${input.role}.`,
    what,
    "",
    `Open this link to accept: ${input.url}`,
    "",
    "The invitation expires in 7 days. If you did not expect it, ignore this message.",
  ].join("\n");
  const html = layout(
    `<p>${h(input.inviterName)} invites you to join the workshop <strong>${h(input.workshopName)}</strong> as <strong>${h(input.role)}</strong>.</p>` +
      `<p>${h(what)}</p><p><a href="${h(input.url)}">Accept the invitation</a></p>` +
      `<p>The invitation expires in 7 days. If you did not expect it, ignore this message.</p>`,
  );
  return { subject, text, html };
}

export function passwordResetMail(input: { name: string; url: string }) {
  const subject = "Reset your Panelproof password";
  const text = [
    `Hello ${input.name},`,
    "",
    `Open this link within an hour to choose a new password: ${input.url}`,
    "",
    "If you did not ask for this, ignore this message; your password stays as it is.",
  ].join("\n");
  const html = layout(
    `<p>Hello ${h(input.name)},</p><p><a href="${h(input.url)}">Choose a new password</a> (the link works for one hour).</p>` +
      `<p>If you did not ask for this, ignore this message; your password stays as it is.</p>`,
  );
  return { subject, text, html };
}
