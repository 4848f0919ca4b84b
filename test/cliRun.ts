import { join } from 'node:path';
import { readDesignFile, type CliIo } from '../cli/io.js';
import { runCli } from '../cli/main.js';
import { ROOT } from './helpers.js';

/** Runs the command line in-process against the repository's files, capturing what it prints. */
export async function runCommand(args: string[], files: Record<string, string> = {}, terminal: { tty?: boolean; env?: Record<string, string> } = {}): Promise<{ code: number; out: string; err: string; written: Record<string, string> }> {
  let out = '';
  let err = '';
  const written: Record<string, string> = {};
  const io: CliIo = {
    stdout: (t) => void (out += t),
    stderr: (t) => void (err += t),
    readFile: (p) => written[p] ?? files[p] ?? readDesignFile(join(ROOT, p)),
    writeFile: (p, text) => void (written[p] = text),
    stdoutIsTTY: terminal.tty ?? false,
    stderrIsTTY: false,
    env: terminal.env ?? {},
  };
  const code = await runCli(args, io);
  return { code, out, err, written };
}
