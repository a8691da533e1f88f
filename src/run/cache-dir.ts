import { homedir } from 'node:os';
import { isAbsolute, join } from 'node:path';

/** Environment variable that names the sweep's matrix cache folder (the `--cache` option wins). */
export const CACHE_ENV = 'SLABBENCH_CACHE_DIR';

/**
 * Default folder of the generated-case cache, outside any results folder so CI artifacts of the
 * results never collect the matrices: $SLABBENCH_CACHE_DIR when set, else the per-user cache
 * folder of the OS (the XDG base directory rule on Linux and other Unix: $XDG_CACHE_HOME when it
 * is an absolute path, else ~/.cache; ~/Library/Caches on macOS; %LOCALAPPDATA% on Windows —
 * common practice) + slabbench/matrices.
 */
export function defaultCacheDir(
  env: Record<string, string | undefined> = process.env, platform: string = process.platform, home: string = homedir(),
): string {
  const given = env[CACHE_ENV];
  if (given !== undefined && given.trim() !== '') return given;
  let base: string;
  if (platform === 'win32') base = env.LOCALAPPDATA && env.LOCALAPPDATA !== '' ? env.LOCALAPPDATA : join(home, 'AppData', 'Local');
  else if (platform === 'darwin') base = join(home, 'Library', 'Caches');
  else base = env.XDG_CACHE_HOME && isAbsolute(env.XDG_CACHE_HOME) ? env.XDG_CACHE_HOME : join(home, '.cache');
  return join(base, 'slabbench', 'matrices');
}
