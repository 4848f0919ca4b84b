import { join } from 'node:path';
import { memoryIo, readDesignFile } from '../cli/io.js';
import { runCli } from '../cli/main.js';
import { ROOT } from './helpers.js';

/** Runs the command line in-process against the repository's files, capturing what it prints. */
export async function runCommand(args: string[], files: Record<string, string> = {}, terminal: { tty?: boolean; env?: Record<string, string> } = {}): Promise<{ code: number; out: string; err: string; written: Record<string, string> }> {
  const { io, captured } = memoryIo((p) => files[p] ?? readDesignFile(join(ROOT, p)), terminal);
  const code = await runCli(args, io);
  return { code, ...captured };
}
