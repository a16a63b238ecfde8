/**
 * The local SMTP catcher and the mailer adapter, over a real SMTP conversation on 127.0.0.1.
 *
 * References outside the project: SMTP (RFC 5321 — the envelope's RCPT TO lists every recipient,
 * Bcc included, while the headers do not show Bcc), nodemailer as the sending client and mailparser
 * (the npm reference libraries) for the message structure.
 */
import { existsSync, mkdtempSync, readdirSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import nodemailer from "nodemailer";
import { afterEach, beforeEach, describe, expect, it } from "vitest";
import { extractLinks, listStoredMail, startMailCatcher, type MailCatcher } from "../../server/fakes/smtp";
import { createMailer, renderMail } from "../../server/integrations/mailer";
import { startFakes, TEST_MAIL_FROM, type Fakes } from "../helpers/fakes";

describe("mail catcher with the mailer adapter", () => {
  let fakes: Fakes;
  beforeEach(async () => {
    fakes = await startFakes();
  });
  afterEach(async () => {
    await fakes.stop();
  });

  it("catches a mail sent with nodemailer and waitFor finds it with its links", async () => {
    const { text, html } = renderMail(
      "Confirm your e-mail address",
      ["Welcome to the desk.", "Click below to confirm."],
      {
        label: "Confirm address",
        url: "http://localhost:3000/verify?token=abc123&next=%2Fhome",
      },
    );
    const waiting = fakes.mail.waitFor((m) => m.to.includes("tech@burnline.test"), 5000);
    const sent = await fakes.mailer.send({
      to: "Tech@Burnline.test",
      subject: "Confirm your e-mail address",
      text,
      html,
    });
    expect(sent.messageId).toMatch(/^<.+@.+>$/); // RFC 5322 msg-id form, as nodemailer generates it
    const mail = await waiting;
    expect(mail.subject).toBe("Confirm your e-mail address");
    expect(mail.from).toBe(TEST_MAIL_FROM);
    expect(mail.to).toEqual(["tech@burnline.test"]);
    expect(mail.messageId).toBe(sent.messageId);
    expect(mail.text).toContain("Click below to confirm.");
    expect(mail.html).toContain("Confirm address");
    // The href in HTML is written with &amp;; the extracted link is the decoded URL, found once.
    expect(mail.links).toEqual(["http://localhost:3000/verify?token=abc123&next=%2Fhome"]);
    expect(Number.isNaN(Date.parse(mail.date))).toBe(false);
  });

  it("keeps Bcc recipients from the envelope and lists messages oldest first", async () => {
    const transport = nodemailer.createTransport({ host: "127.0.0.1", port: fakes.mail.port, secure: false });
    await transport.sendMail({
      from: TEST_MAIL_FROM,
      to: "owner@burnline.test",
      bcc: "audit@burnline.test",
      subject: "First",
      text: "one",
    });
    await transport.sendMail({ from: TEST_MAIL_FROM, to: "owner@burnline.test", subject: "Second", text: "two" });
    transport.close();
    const all = fakes.mail.messages();
    expect(all.map((m) => m.subject)).toEqual(["First", "Second"]);
    expect(all[0].to.sort()).toEqual(["audit@burnline.test", "owner@burnline.test"]);
    expect(all[0].text).not.toContain("audit@");
    fakes.mail.clear();
    expect(fakes.mail.messages()).toEqual([]);
  });

  it("accepts any credentials without TLS, as a local catcher should", async () => {
    const mailer = createMailer({
      host: "127.0.0.1",
      port: fakes.mail.port,
      user: "anyone",
      pass: "anything",
      from: TEST_MAIL_FROM,
    });
    await expect(mailer.verify()).resolves.toBe(true);
    await mailer.send({ to: "expert@burnline.test", subject: "With auth", text: "hello" });
    mailer.close();
    const mail = await fakes.mail.waitFor((m) => m.subject === "With auth", 5000);
    expect(mail.to).toEqual(["expert@burnline.test"]);
  });

  it("rejects waitFor after the timeout, naming what was caught", async () => {
    await fakes.mailer.send({ to: "a@burnline.test", subject: "Unrelated", text: "x" });
    await fakes.mail.waitFor((m) => m.subject === "Unrelated", 5000);
    await expect(fakes.mail.waitFor((m) => m.subject === "Never sent", 50)).rejects.toThrow(/Unrelated/);
  });
});

describe("mail storage for the development inbox", () => {
  let dir: string;
  let catcher: MailCatcher | null = null;
  beforeEach(() => {
    dir = mkdtempSync(join(tmpdir(), "burnline-mail-"));
  });
  afterEach(async () => {
    await catcher?.close();
    catcher = null;
    rmSync(dir, { recursive: true, force: true });
  });

  it("writes one JSON file per message and loads them again after a restart", async () => {
    catcher = await startMailCatcher({ port: 0, storeDir: dir });
    const mailer = createMailer({ host: "127.0.0.1", port: catcher.port, from: TEST_MAIL_FROM });
    await mailer.send({
      to: "owner@burnline.test",
      subject: "Invite",
      text: "Join at https://burnline.test/invite/xyz.",
    });
    mailer.close();
    const mail = await catcher.waitFor((m) => m.subject === "Invite", 5000);
    expect(readdirSync(dir)).toEqual([`${mail.id}.json`]);
    // Trailing sentence punctuation is not part of the URL.
    expect(mail.links).toEqual(["https://burnline.test/invite/xyz"]);
    expect(listStoredMail(dir).map((m) => m.id)).toEqual([mail.id]);
    await catcher.close();
    catcher = await startMailCatcher({ port: 0, storeDir: dir });
    expect(catcher.messages().map((m) => m.subject)).toEqual(["Invite"]);
    catcher.clear();
    expect(existsSync(join(dir, `${mail.id}.json`))).toBe(false);
  });
});

describe("renderMail and link extraction", () => {
  it("escapes user-supplied text in the HTML part and keeps it verbatim in the text part", () => {
    const { text, html } = renderMail("Case <Korrin> answered", ['Note: "a < b" & more']);
    expect(html).toContain("Case &lt;Korrin&gt; answered");
    expect(html).toContain("Note: &quot;a &lt; b&quot; &amp; more");
    expect(html).not.toContain("<Korrin>");
    expect(text).toContain('Note: "a < b" & more');
    expect(text).toContain("Burnline");
  });

  it("refuses a non-http action link", () => {
    expect(() => renderMail("x", [], { label: "Open", url: "javascript:alert(1)" })).toThrow(/http/);
  });

  it("extracts only http(s) links, decoded and without duplicates", () => {
    const links = extractLinks(
      `<a href="https://a.test/x?y=1&amp;z=2">a</a> <a href='mailto:desk@burnline.test'>m</a> <a href=http://b.test/>b</a>`,
      "See https://a.test/x?y=1&z=2, or (http://c.test/path).",
    );
    expect(links).toEqual(["https://a.test/x?y=1&z=2", "http://b.test/", "http://c.test/path"]);
  });
});
