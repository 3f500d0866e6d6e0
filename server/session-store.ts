import { ConnectSessionKnexStore } from 'connect-session-knex';
import type { SessionData } from 'express-session';
import type { Knex } from 'knex';

const TOUCH_EVERY_MS = 60_000;

/**
 * The session store, on a connection of its own. connect-session-knex hands an error to the
 * callback and then also rethrows it from the promise nobody awaits (get, set, destroy, …), and
 * its `touch` (after every signed-in response) does not catch at all: a failed session write
 * became an unhandled rejection that ended the process. Here every store error goes to
 * express-session's callback only (the request gets a 503 from the error middleware) and is logged.
 */
export class SessionStore extends ConnectSessionKnexStore {
  constructor(knex: Knex) {
    super({ knex, tableName: 'sessions', createTable: false, cleanupInterval: 10 * 60 * 1000, onDbCleanupError: (e: unknown) => console.error('session store: cleanup failed', e) });
    this.ready.catch((e: unknown) => console.error('session store: not ready', e));
  }

  private static quiet<T>(what: string, p: Promise<T>, fallback: T): Promise<T> {
    return p.catch((e: unknown) => {
      console.error(`session store: ${what} failed:`, e instanceof Error ? e.message : e);
      return fallback;
    });
  }

  override get(sid: string, callback: (err: any, session?: SessionData | null) => void) {
    return SessionStore.quiet('get', super.get(sid, callback), null);
  }
  override set(sid: string, session: SessionData, callback?: (err?: any) => void) {
    return SessionStore.quiet('set', super.set(sid, session, callback), undefined);
  }
  override destroy(sid: string, callback?: (err?: any) => void) {
    return SessionStore.quiet('destroy', super.destroy(sid, callback), 0);
  }
  override length(callback: (err: any, length?: number) => void) {
    return SessionStore.quiet('length', super.length(callback), undefined);
  }
  override clear(callback?: (err?: any) => void) {
    return SessionStore.quiet('clear', super.clear(callback), 0);
  }
  override all(callback: (err: any, obj?: SessionData[] | { [sid: string]: SessionData } | null) => void) {
    return SessionStore.quiet('all', super.all(callback), []);
  }
  /** sid → when its expiry was last written: a rolling session is written at most once a minute */
  private touched = new Map<string, number>();

  override async touch(sid: string, session: SessionData, callback?: (err?: any) => void): Promise<void> {
    // every signed-in response touches its session; writing each one would queue every read
    // behind the single SQLite writer while a background check holds it (8 h sessions lose nothing)
    const now = Date.now();
    const last = this.touched.get(sid);
    if (last !== undefined && now - last < TOUCH_EVERY_MS) {
      callback?.();
      return;
    }
    if (this.touched.size > 100_000) this.touched.clear();
    this.touched.set(sid, now);
    try {
      await super.touch(sid, session);
    } catch (e) {
      console.error('session store: touch failed:', e instanceof Error ? e.message : e);
      callback?.(e);
      return;
    }
    callback?.();
  }
}
