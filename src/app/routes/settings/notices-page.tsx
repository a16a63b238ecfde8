import { NoticeSettingsForm } from "../../../features/notifications/components/notice-settings";

/** /settings/notices — what the signed-in user is told, in the app and by mail. */
export function NoticeSettingsPage() {
  return (
    <div className="space-y-4">
      <div>
        <h1 className="text-2xl font-bold">Notices</h1>
        <p className="text-ink-600">
          Choose, per kind of news, whether it shows under Notices in the app, comes by mail, or both. New chat messages
          and marks are not sent while you have the case&apos;s live review open.
        </p>
      </div>
      <NoticeSettingsForm />
    </div>
  );
}
