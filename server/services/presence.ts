/**
 * Who is in each case's room right now, who is typing, and the latest shared view window. Kept in
 * memory only (nothing here is part of the record): a restart empties it and clients re-join.
 */
import type { Role } from "../../shared/domain/case-status";
import { TYPING_TIMEOUT_MS, type Participant, type PresencePayload, type ViewPayload } from "../../shared/realtime";

interface Entry {
  userId: string;
  name: string;
  role: Role;
  color: string;
  sockets: Set<string>;
  typing: boolean;
  typingTimer: ReturnType<typeof setTimeout> | null;
}

export interface PresenceMember {
  userId: string;
  name: string;
  role: Role;
  color: string;
}

export class PresenceRegistry {
  private rooms = new Map<string, Map<string, Entry>>();
  private views = new Map<string, ViewPayload>();

  /** @param onTypingExpired called when a typing flag clears by itself (the caller broadcasts presence) */
  constructor(private readonly onTypingExpired: (caseId: string) => void = () => {}) {}

  /** Adds a socket; true when the participant list changed (a new user arrived). */
  join(caseId: string, socketId: string, m: PresenceMember): boolean {
    let room = this.rooms.get(caseId);
    if (!room) this.rooms.set(caseId, (room = new Map()));
    const e = room.get(m.userId);
    if (e) {
      e.sockets.add(socketId);
      e.name = m.name;
      return true; // connection count changed
    }
    room.set(m.userId, { ...m, sockets: new Set([socketId]), typing: false, typingTimer: null });
    return true;
  }

  /** Removes a socket; `userLeft` when it was the user's last one in the room. */
  leave(caseId: string, socketId: string, userId: string): { changed: boolean; userLeft: boolean } {
    const room = this.rooms.get(caseId);
    const e = room?.get(userId);
    if (!room || !e || !e.sockets.delete(socketId)) return { changed: false, userLeft: false };
    if (e.sockets.size > 0) return { changed: true, userLeft: false };
    if (e.typingTimer) clearTimeout(e.typingTimer);
    room.delete(userId);
    if (room.size === 0) {
      this.rooms.delete(caseId);
      this.views.delete(caseId);
    }
    return { changed: true, userLeft: true };
  }

  /** Sets a user's typing flag (it clears itself after TYPING_TIMEOUT_MS); true when it changed. */
  setTyping(caseId: string, userId: string, typing: boolean, timeoutMs = TYPING_TIMEOUT_MS): boolean {
    const e = this.rooms.get(caseId)?.get(userId);
    if (!e) return false;
    if (e.typingTimer) clearTimeout(e.typingTimer);
    e.typingTimer = null;
    const changed = e.typing !== typing;
    e.typing = typing;
    if (typing) {
      e.typingTimer = setTimeout(() => {
        e.typingTimer = null;
        if (e.typing) {
          e.typing = false;
          this.onTypingExpired(caseId);
        }
      }, timeoutMs);
      e.typingTimer.unref?.();
    }
    return changed;
  }

  snapshot(caseId: string): PresencePayload {
    const room = this.rooms.get(caseId);
    const participants: Participant[] = room
      ? [...room.values()].map((e) => ({
          userId: e.userId,
          name: e.name,
          role: e.role,
          color: e.color,
          typing: e.typing,
          connections: e.sockets.size,
        }))
      : [];
    participants.sort((a, b) => (a.role === b.role ? a.name.localeCompare(b.name) : a.role < b.role ? -1 : 1));
    return { caseId, participants };
  }

  setView(v: ViewPayload): void {
    if (this.rooms.has(v.caseId)) this.views.set(v.caseId, v);
  }

  view(caseId: string): ViewPayload | null {
    return this.views.get(caseId) ?? null;
  }

  clear(): void {
    for (const room of this.rooms.values())
      for (const e of room.values()) if (e.typingTimer) clearTimeout(e.typingTimer);
    this.rooms.clear();
    this.views.clear();
  }
}
