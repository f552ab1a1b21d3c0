// Checks the harness itself: the stack answers, and mail sent to the SMTP catcher reaches both the
// outbox helper (JSON files in OUTBOX_DIR) and the admin's outbox page.
import nodemailer from "nodemailer";
import { expect, persona, test } from "./fixtures";

test("the health endpoint answers on the stack's base URL", async ({ request }) => {
  const res = await request.get("/api/v1/health");
  expect(res.status()).toBe(200);
  expect(await res.json()).toEqual({ status: "ok" });
});

test("mail caught by the SMTP catcher is readable by tests and listed on the admin outbox page", async ({
  page,
  signInAs,
  outbox,
  stack,
}) => {
  const to = "harness.check@harrowvale.example";
  const subject = "Harness check: caught mail";
  const transport = nodemailer.createTransport({
    host: "127.0.0.1",
    port: stack.smtpPort,
    secure: false,
    ignoreTLS: true,
  });
  await transport.sendMail({
    from: "Limberly e2e <e2e@limberly.local>",
    to,
    subject,
    text: "Body line one.\nBody line two.",
    attachments: [{ filename: "note.txt", content: "attached text", contentType: "text/plain" }],
  });
  transport.close();

  const msg = await outbox.waitFor((m) => m.subject === subject && m.to.includes(to));
  expect(msg.text).toContain("Body line two.");
  expect(msg.attachments).toHaveLength(1);
  expect(msg.attachments[0]).toMatchObject({ filename: "note.txt", contentType: "text/plain" });
  expect(Buffer.from(msg.attachments[0].content, "base64").toString("utf8")).toBe("attached text");
  expect(outbox.to(to.toUpperCase()).map((m) => m.id)).toContain(msg.id);

  await signInAs(page, persona("admin").email);
  await page.goto("/admin/outbox");
  const item = page.locator("details").filter({ hasText: subject });
  await expect(item).toHaveCount(1);
  await expect(item).toContainText(`to ${to}`);
  await item.locator("summary").click();
  await expect(item).toContainText("Body line one.");
  await expect(item).toContainText("note.txt (text/plain");
});
