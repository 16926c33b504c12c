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

export interface RunReportMailInput {
  workshopName: string;
  senderName: string;
  runName: string;
  recordingName: string;
  passed: boolean;
  counts: Record<string, number>;
  mismatchCount: number;
  /** Failing elements (fail and no data), each with a few of its mismatch intervals in words. */
  failing: { panelName: string; label: string; elementId: string; status: string; mismatchCount: number; intervals: string[] }[];
  /** The report in the workshop (members sign in). */
  reportUrl: string;
  /** A share link made for this message: readable without signing in. */
  shareUrl: string | null;
  note?: string;
}

const STATUS_WORDS: Record<string, string> = { fail: "FAIL", no_data: "no data", pass: "pass", untested: "untested", placeholder: "placeholder" };

/** A run's report by e-mail (issue 6): verdict, counts, every failing element, and links to the report. */
export function runReportMail(input: RunReportMailInput) {
  const verdict = input.passed ? "passed" : "not passed";
  const subject = `Run report: ${input.runName} (${verdict})`;
  const counts = ["pass", "fail", "no_data", "untested", "placeholder"].map((k) => `${STATUS_WORDS[k]} ${input.counts[k] ?? 0}`).join(", ");
  const failingLines = input.failing.flatMap((f) => [
    `- ${f.label} (${f.elementId}) on ${f.panelName}: ${STATUS_WORDS[f.status] ?? f.status}, ${f.mismatchCount} mismatch${f.mismatchCount === 1 ? "" : "es"}`,
    ...f.intervals.map((i) => `    ${i}`),
  ]);
  const text = [
    `${input.senderName} sends you the report of a run in the workshop "${input.workshopName}".`,
    ...(input.note ? ["", input.note] : []),
    "",
    `Run: ${input.runName}`,
    `Recording: ${input.recordingName}`,
    `Verdict: ${verdict}`,
    `Elements: ${counts}`,
    `Mismatches: ${input.mismatchCount}`,
    "",
    input.failing.length ? "Failing elements:" : "No element failed or went without data.",
    ...failingLines,
    "",
    `The report (members of the workshop): ${input.reportUrl}`,
    ...(input.shareUrl ? [`Read-only share link (no sign-in needed): ${input.shareUrl}`] : []),
  ].join("\n");
  const failingHtml = input.failing.length
    ? `<p><strong>Failing elements</strong></p><ul>${input.failing
        .map(
          (f) =>
            `<li><strong>${h(f.label)}</strong> (${h(f.elementId)}) on ${h(f.panelName)}: ${h(STATUS_WORDS[f.status] ?? f.status)}, ${f.mismatchCount} mismatch${f.mismatchCount === 1 ? "" : "es"}` +
            (f.intervals.length ? `<ul>${f.intervals.map((i) => `<li>${h(i)}</li>`).join("")}</ul>` : "") +
            `</li>`,
        )
        .join("")}</ul>`
    : `<p>No element failed or went without data.</p>`;
  const html = layout(
    `<p>${h(input.senderName)} sends you the report of a run in the workshop <strong>${h(input.workshopName)}</strong>.</p>` +
      (input.note ? `<p style="border-left:3px solid #c9ccd1;padding-left:8px">${h(input.note)}</p>` : "") +
      `<p><strong>${h(input.runName)}</strong> on ${h(input.recordingName)}: <strong>${h(verdict)}</strong></p>` +
      `<p>Elements: ${h(counts)}. Mismatches: ${input.mismatchCount}.</p>` +
      failingHtml +
      `<p><a href="${h(input.reportUrl)}">Open the report</a> (members of the workshop)</p>` +
      (input.shareUrl ? `<p><a href="${h(input.shareUrl)}">Read-only share link</a> (no sign-in needed)</p>` : ""),
  );
  return { subject, text, html };
}
