/**
 * Where earwitness keeps its files when the user names none. The daemon
 * writes the session log here and `sessions` / `review` read it, so both
 * must agree: this is the one place that decides.
 *
 * @example
 *   defaultLogFile({ XDG_DATA_HOME: '/data' }, '/home/ana')   // → '/data/earwitness/sessions.db'
 *   defaultLogFile({}, '/home/ana')                           // → '/home/ana/.local/share/earwitness/sessions.db'
 */
import { homedir } from 'node:os';
import { isAbsolute, join } from 'node:path';

/**
 * The session log under the XDG data directory. The XDG Base Directory
 * specification says a relative XDG_DATA_HOME is invalid and must be
 * ignored, so one is.
 */
export function defaultLogFile(env: NodeJS.ProcessEnv = process.env, home: string = homedir()): string {
  const xdg = env.XDG_DATA_HOME;
  const dataHome = xdg && isAbsolute(xdg) ? xdg : join(home, '.local', 'share');
  return join(dataHome, 'earwitness', 'sessions.db');
}
