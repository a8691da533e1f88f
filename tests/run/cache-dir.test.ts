import { describe, it, expect } from 'vitest';
import { join } from 'node:path';
import { defaultCacheDir } from '../../src/run/cache-dir.js';

// The per-user cache folders of the XDG Base Directory Specification (freedesktop.org) on Linux,
// ~/Library/Caches on macOS and %LOCALAPPDATA% on Windows (common practice).
describe('defaultCacheDir', () => {
  it('SLABBENCH_CACHE_DIR wins; else the OS cache folder + slabbench/matrices', () => {
    expect(defaultCacheDir({ SLABBENCH_CACHE_DIR: '/data/c' }, 'linux', '/home/a')).toBe('/data/c');
    expect(defaultCacheDir({ SLABBENCH_CACHE_DIR: ' ' }, 'linux', '/home/a')).toBe(join('/home/a', '.cache', 'slabbench', 'matrices'));
    expect(defaultCacheDir({}, 'linux', '/home/a')).toBe(join('/home/a', '.cache', 'slabbench', 'matrices'));
    expect(defaultCacheDir({ XDG_CACHE_HOME: '/var/cache/a' }, 'linux', '/home/a')).toBe(join('/var/cache/a', 'slabbench', 'matrices'));
    // a relative XDG_CACHE_HOME is invalid by the specification and ignored
    expect(defaultCacheDir({ XDG_CACHE_HOME: 'rel' }, 'linux', '/home/a')).toBe(join('/home/a', '.cache', 'slabbench', 'matrices'));
    expect(defaultCacheDir({}, 'darwin', '/Users/a')).toBe(join('/Users/a', 'Library', 'Caches', 'slabbench', 'matrices'));
    expect(defaultCacheDir({ LOCALAPPDATA: 'C:\\Users\\a\\AppData\\Local' }, 'win32', 'C:\\Users\\a')).toBe(join('C:\\Users\\a\\AppData\\Local', 'slabbench', 'matrices'));
  });
});
