import { promises as fsp, writeFileSync, renameSync, unlinkSync, createWriteStream } from 'node:fs';
import { dirname, basename, join } from 'node:path';
import { randomBytes } from 'node:crypto';

/** Temporary sibling path for `target`; renamed over `target` only once complete. */
export function tempPathFor(target: string): string {
  return join(dirname(target), `.${basename(target)}.${process.pid}.${randomBytes(4).toString('hex')}.tmp`);
}

/** Write a whole file atomically (temp file in the same folder, then rename). */
export function writeFileAtomicSync(target: string, data: string | Uint8Array): void {
  const tmp = tempPathFor(target);
  try {
    writeFileSync(tmp, data);
    renameSync(tmp, target);
  } catch (e) {
    try { unlinkSync(tmp); } catch { /* already gone */ }
    throw e;
  }
}

export async function writeFileAtomic(target: string, data: string | Uint8Array): Promise<void> {
  const tmp = tempPathFor(target);
  try {
    await fsp.writeFile(tmp, data);
    await fsp.rename(tmp, target);
  } catch (e) {
    await fsp.unlink(tmp).catch(() => undefined);
    throw e;
  }
}

/**
 * Stream into a temp file; `commit()` renames it over the target, `abort()` deletes it.
 * Use for large outputs (Matrix Market files) that must never be left half-written.
 */
export function openAtomicStream(target: string): {
  stream: NodeJS.WritableStream & { write(chunk: string): boolean };
  commit(): Promise<void>;
  abort(): Promise<void>;
} {
  const tmp = tempPathFor(target);
  const stream = createWriteStream(tmp);
  const closed = new Promise<void>((resolve, reject) => {
    stream.on('close', () => resolve());
    stream.on('error', reject);
  });
  return {
    stream,
    async commit() {
      stream.end();
      await closed;
      await fsp.rename(tmp, target);
    },
    async abort() {
      stream.destroy();
      await closed.catch(() => undefined);
      await fsp.unlink(tmp).catch(() => undefined);
    },
  };
}
