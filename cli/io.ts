import { readFileSync, statSync, writeFileSync } from 'node:fs';
import { dirname, isAbsolute, join, normalize } from 'node:path';
import type { SourceLoader } from '../lib/index.js';
import { MAX_SOURCE_CHARS } from '../lib/index.js';

/** What a command may touch of the outside world; tests pass their own. */
export interface CliIo {
  stdout: (text: string) => void;
  stderr: (text: string) => void;
  /** Reads a file as UTF-8, or throws an Error whose message says why not. */
  readFile: (path: string) => string;
  /** Writes a file as UTF-8, or throws an Error whose message says why not (only `report` writes). */
  writeFile?: (path: string, text: string) => void;
  /** Whether stdout/stderr are terminals (for colour and progress). */
  stdoutIsTTY: boolean;
  stderrIsTTY: boolean;
  env: Record<string, string | undefined>;
}

/** Reads a design or included file, refusing files over the size limit before reading them. */
export function readDesignFile(path: string): string {
  let size: number;
  try {
    size = statSync(path).size;
  } catch (e) {
    throw new Error(describeFsError(e));
  }
  if (size > MAX_SOURCE_CHARS * 4) throw new Error(`the file is ${(size / 1024 / 1024).toFixed(0)} MiB; the largest design read is ${MAX_SOURCE_CHARS / 1024 / 1024} MiB`);
  try {
    return readFileSync(path, 'utf8');
  } catch (e) {
    throw new Error(describeFsError(e));
  }
}

function describeFsError(e: unknown): string {
  const code = (e as NodeJS.ErrnoException).code;
  if (code === 'ENOENT') return 'no such file';
  if (code === 'EISDIR') return 'it is a folder, not a file';
  if (code === 'EACCES') return 'permission denied';
  return (e as Error).message ?? String(e);
}

export function processIo(): CliIo {
  return {
    stdout: (t) => process.stdout.write(t),
    stderr: (t) => process.stderr.write(t),
    readFile: readDesignFile,
    writeFile: (path, text) => {
      try {
        writeFileSync(path, text, 'utf8');
      } catch (e) {
        throw new Error(describeFsError(e));
      }
    },
    stdoutIsTTY: Boolean(process.stdout.isTTY),
    stderrIsTTY: Boolean(process.stderr.isTTY),
    env: process.env,
  };
}

/** Resolves `include "…"` relative to the including file (an absolute path as it is) and reads it through `io`. */
export function fileLoader(io: CliIo): SourceLoader {
  return (request, from) => {
    const file = normalize(isAbsolute(request) ? request : join(dirname(from), request));
    try {
      return { file, text: io.readFile(file) };
    } catch (e) {
      return { error: `${file}: ${(e as Error).message}` };
    }
  };
}

/**
 * An io that keeps in memory what a command prints and writes, for tests and the fuzz
 * harness: files it wrote are read back first, the rest through `read`. Read the
 * captured text from `captured` after the run.
 */
export function memoryIo(read: (path: string) => string, terminal: { tty?: boolean; env?: Record<string, string> } = {}): { io: CliIo; captured: { out: string; err: string; written: Record<string, string> } } {
  const captured = { out: '', err: '', written: {} as Record<string, string> };
  const io: CliIo = {
    stdout: (t) => void (captured.out += t),
    stderr: (t) => void (captured.err += t),
    readFile: (p) => captured.written[p] ?? read(p),
    writeFile: (p, text) => void (captured.written[p] = text),
    stdoutIsTTY: terminal.tty ?? false,
    stderrIsTTY: false,
    env: terminal.env ?? {},
  };
  return { io, captured };
}
