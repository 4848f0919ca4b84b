import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readDesignFile, type CliIo } from '../../cli/io.js';
import { runCli } from '../../cli/main.js';
import { DIAGNOSTIC_CODES } from '../../lib/index.js';
import { ROOT } from '../helpers.js';

const README = readFileSync(join(ROOT, 'README.md'), 'utf8');

async function run(args: string[]): Promise<{ out: string; err: string }> {
  let out = '';
  let err = '';
  const io: CliIo = { stdout: (t) => void (out += t), stderr: (t) => void (err += t), readFile: (p) => readDesignFile(join(ROOT, p)), stdoutIsTTY: false, stderrIsTTY: false, env: {} };
  await runCli(args, io);
  return { out, err };
}

/** The fenced blocks of the README that show a command and what it printed. */
function quotedRuns(): { command: string; shown: string[] }[] {
  // A command may go on over lines that end in a backslash, as in a shell.
  const blocks = [...README.matchAll(/```\n\$ tubemargin ((?:[^\n]*\\\n)*[^\n]+)\n([\s\S]*?)```/g)];
  return blocks.map((m) => ({ command: (m[1] as string).replace(/\\\n\s*/g, ''), shown: (m[2] as string).split('\n').filter((l) => l !== '' && l !== '…') }));
}

/** Splits a command line into words as a shell would for these examples: spaces, and double quotes around words with spaces. */
function words(command: string): string[] {
  return [...command.matchAll(/"([^"]*)"|(\S+)/g)].map((m) => m[1] ?? m[2]!);
}

describe('the README', () => {
  it('opens with the job, then exactly two set-up commands: the demo and the tests', () => {
    const setup = /## Set up\n\n```sh\n([\s\S]*?)```/.exec(README)?.[1]?.trim().split('\n');
    expect(setup).toEqual(['npm ci && ./bin/tubemargin.js check nets/crate-tally.tube', 'npm test']);
    expect(README.indexOf('## Set up')).toBeGreaterThan(README.indexOf('vacuum tubes'));
  });

  it('shows, line for line, what each quoted command prints', async () => {
    const ts = quotedRuns().filter((t) => !t.command.includes('>'));
    expect(ts.length).toBeGreaterThanOrEqual(2);
    // Commands over several lines are read whole (the pulse example is one).
    expect(ts.some((t) => t.command.startsWith('pulse') && t.command.includes('--fastest'))).toBe(true);
    for (const t of ts) {
      // Every quoted command shows something of what it prints: an empty block checks nothing.
      expect(t.shown.length, `the README quotes 'tubemargin ${t.command}' with no output`).toBeGreaterThan(0);
      const r = await run(words(t.command));
      const printed = (r.out + r.err).split('\n');
      let at = 0;
      for (const line of t.shown) {
        const found = printed.indexOf(line, at);
        expect(found, `README line not printed by 'tubemargin ${t.command}': ${line}`).toBeGreaterThanOrEqual(0);
        at = found + 1;
      }
    }
  }, 1_200_000); // seventeen commands, a 2-D supply sweep of the crate tally among them (153 worst-case checks, each searching its receivers' threshold corners): minutes on a busy 2-core machine

  it('quotes design text that is really in the demo files (spacing aside)', () => {
    const squash = (t: string) => t.replace(/[ \t]+/g, ' ');
    const quoted = [
      { file: 'nets/nor-adder.tube', block: README.slice(README.indexOf('## A tour'), README.indexOf('$ tubemargin check nets/nor-adder.tube')) },
      { file: 'nets/irrigation-sequencer.tube', block: README.slice(README.indexOf('Blocks make repeated circuits'), README.indexOf('and `show` finds')) },
    ];
    for (const { file, block } of quoted) {
      const text = squash(readFileSync(join(ROOT, file), 'utf8'));
      const code = [...block.matchAll(/```\n([\s\S]*?)```/g)].flatMap((m) => (m[1] as string).split('\n')).filter((l) => l.trim() !== '');
      expect(code.length).toBeGreaterThan(3);
      for (const line of code) expect(text, `${file} lacks: ${line}`).toContain(squash(line));
    }
  });
});

describe('docs/LANGUAGE.md', () => {
  it('lists every diagnostic code the tool can give', () => {
    const doc = readFileSync(join(ROOT, 'docs/LANGUAGE.md'), 'utf8');
    expect(DIAGNOSTIC_CODES.filter((code) => !doc.includes(`\`${code}\``))).toEqual([]);
  });
});
