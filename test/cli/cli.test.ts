import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readDesignFile, type CliIo } from '../../cli/io.js';
import { runCli } from '../../cli/main.js';
import { ROOT, demoDesigns } from '../helpers.js';
import { runCommand } from '../cliRun.js';

interface Run {
  code: number;
  out: string;
  err: string;
}

async function run(args: string[], env: Record<string, string> = {}, tty = false): Promise<Run> {
  let out = '';
  let err = '';
  const io: CliIo = {
    stdout: (t) => void (out += t),
    stderr: (t) => void (err += t),
    readFile: (p) => readDesignFile(join(ROOT, p)),
    stdoutIsTTY: tty,
    stderrIsTTY: tty,
    env,
  };
  const code = await runCli(args, io);
  return { code, out, err };
}

const ANSI = /\u001b\[/;

describe('tubemargin on the command line', () => {
  it('prints help with examples and exits 0', async () => {
    const r = await run(['--help']);
    expect(r.code).toBe(0);
    expect(r.out).toContain('Examples:');
    expect(r.out).toContain('show');
  });

  it('no command is a usage error: help on stderr, exit 2, as for any other (issue #17)', async () => {
    const r = await run([]);
    expect(r.code).toBe(2);
    expect(r.out).toBe('');
    expect(r.err).toContain('Usage: tubemargin');
    // Asked for, help is a success.
    expect((await run(['help'])).code).toBe(0);
  });

  it('every help page fits 80 columns and shows 1–3 examples of its own command, with options it has (issue #17)', async () => {
    const top = await run(['--help']);
    const listed = top.out.slice(top.out.indexOf('Commands:'), top.out.indexOf('Examples:'));
    const commands = [...listed.matchAll(/^ {2}([a-z]+)/gm)].map((m) => m[1]!).filter((c) => c !== 'help');
    expect(commands).toEqual(['show', 'solve', 'check', 'sweep', 'report', 'fit', 'tune', 'step', 'pulse', 'tubes']);
    for (const page of [top, ...(await Promise.all(commands.map((c) => run([c, '--help']))))]) {
      for (const line of page.out.split('\n')) expect(line.length, line).toBeLessThanOrEqual(80);
      // No line breaks early: where a paragraph goes on, the next word would not have fitted.
      // (Hand-wrapped text re-wrapped at 80 broke mid-sentence: "expands its" / "blocks…".)
      const text = page.out.slice(0, page.out.search(/\n(Arguments|Options|Commands):/));
      const lines = text.split('\n');
      lines.forEach((line, i) => {
        const next = lines[i + 1];
        if (line === '' || next === undefined || next === '' || /^\s/.test(next) || /^\s/.test(line)) return;
        expect(line.length + 1 + next.split(' ')[0]!.length, `broke early: '${line}' / '${next}'`).toBeGreaterThan(80);
      });
    }
    expect(top.out.slice(top.out.indexOf('Examples:')).match(/^ {2}tubemargin /gm)?.length).toBeLessThanOrEqual(3);
    for (const command of commands) {
      const page = (await run([command, '--help'])).out;
      const examples = page.slice(page.indexOf('Examples:'));
      expect(page, command).toContain('Examples:');
      // An example is a line starting the command; its continuation lines belong to it.
      const lines = examples.split(/\n(?= {2}tubemargin )/).slice(1);
      expect(lines.length, command).toBeGreaterThanOrEqual(1);
      expect(lines.length, command).toBeLessThanOrEqual(3);
      for (const example of lines) {
        expect(example, command).toMatch(new RegExp(`^ {2}tubemargin ${command}\\b`));
        for (const flag of example.match(/(?<= )--?[a-z][a-z-]*/g) ?? []) expect(page, `${command}: ${flag}`).toMatch(new RegExp(`^ {2}(-\\w, )?${flag}\\b`, 'm'));
      }
    }
  });

  it("no help page prints a repeatable option's empty default (issue #17)", async () => {
    for (const command of ['solve', 'sweep', 'report', 'step', 'pulse']) {
      const r = await run([command, '--help']);
      expect(r.code, command).toBe(0);
      expect(r.out, command).not.toContain('(default: [])');
      expect(r.out, command).toMatch(/repeat|one or two/);
    }
  });

  for (const file of demoDesigns()) {
    it(`shows ${file}: rails, stages, nets and loops within 80 columns`, async () => {
      const r = await run(['show', file]);
      expect(r.err).toBe('');
      expect(r.code).toBe(0);
      for (const heading of ['Rails', 'Tube types', 'Stages', 'Nets', 'Loops', 'Parts:']) expect(r.out).toContain(heading);
      for (const line of r.out.split('\n')) expect(line.length).toBeLessThanOrEqual(80);
    });

    it(`reads back its own --json output of ${file} as a design, with the same report`, async () => {
      const json = await run(['show', file, '--json']);
      expect(json.code).toBe(0);
      expect(JSON.parse(json.out).schema).toBe('tubemargin.design/1');
      const dir = mkdtempSync(join(tmpdir(), 'tm-'));
      const path = join(dir, 'design.json');
      writeFileSync(path, json.out);
      let out = '';
      const code = await runCli(['show', path], { stdout: (t) => void (out += t), stderr: () => {}, readFile: readDesignFile, stdoutIsTTY: false, stderrIsTTY: false, env: {} });
      expect(code).toBe(0);
      const text = await run(['show', file]);
      expect(out.split('\n').slice(1)).toEqual(text.out.split('\n').slice(1));
    });
  }

  it('shows the safety cautions for a design whose rails exceed 60 V, and not for a 24 V design', async () => {
    expect((await run(['show', 'nets/crate-tally.tube'])).out).toContain('CAUTION');
    expect((await run(['show', 'nets/nor-adder.tube'])).out).not.toContain('CAUTION');
  });

  it('exits 2 on a broken design, with file:line:col diagnostics and no stack trace', async () => {
    const r = await run(['show', 'docs/examples/broken-latch.tube']);
    expect(r.code).toBe(2);
    expect(r.out).toBe('');
    expect(r.err).toContain('docs/examples/broken-latch.tube:7:8: error: a plate load must be in ohms');
    expect(r.err).toContain('3 errors, 0 warnings');
    expect(r.err).not.toMatch(/\n\s+at /);
  });

  it('exits 2 on a missing file, an unknown command and an unknown option', async () => {
    const missing = await run(['show', 'nets/nothing-here.tube']);
    expect(missing.code).toBe(2);
    expect(missing.err).toBe('error: cannot read nets/nothing-here.tube: no such file [file-unreadable]\n');
    expect((await run(['frobnicate'])).code).toBe(2);
    expect((await run(['show', 'nets/nor-adder.tube', '--bogus'])).code).toBe(2);
    expect((await run(['show'])).code).toBe(2);
  });

  it('colours diagnostics only on a terminal without NO_COLOR, or when FORCE_COLOR asks', async () => {
    const broken = ['show', 'docs/examples/broken-latch.tube'];
    expect((await run(broken, {}, false)).err).not.toMatch(ANSI);
    expect((await run(broken, {}, true)).err).toMatch(ANSI);
    expect((await run(broken, { NO_COLOR: '1' }, true)).err).not.toMatch(ANSI);
    expect((await run(broken, { FORCE_COLOR: '1' }, false)).err).toMatch(ANSI);
    expect((await run(broken, { FORCE_COLOR: '0' }, true)).err).not.toMatch(ANSI);
  });

  it('lists the tube library with the source of every entry', async () => {
    const r = await run(['tubes']);
    expect(r.code).toBe(0);
    for (const t of ['12AX7', '12AU7', '12AT7', '6DJ8']) expect(r.out).toContain(t);
    expect(r.out).toContain('Koren');
  });

  it('runs as the installed binary (the compiled launcher in bin/)', () => {
    const out = execFileSync(process.execPath, [join(ROOT, 'bin/tubemargin.js'), 'show', 'nets/nor-adder.tube'], { cwd: ROOT, encoding: 'utf8' });
    expect(out).toContain('NOR full adder');
    const bad = spawnSync(process.execPath, [join(ROOT, 'bin/tubemargin.js'), 'show', 'docs/examples/broken-latch.tube'], { cwd: ROOT, encoding: 'utf8' });
    expect(bad.status).toBe(2);
  });
});

describe('errors outside the design say what to fix (issue #17)', () => {
  it('a mistyped button or watched net gets a "did you mean", and the closing line blames the sequence, not the design', async () => {
    const typo = await run(['step', 'nets/irrigation-sequencer.tube', '--sequence', 'pulse STPO']);
    expect(typo.code).toBe(2);
    expect(typo.err).toContain("did you mean 'STOP'?");
    expect(typo.err).not.toContain('the design has errors');
    expect(typo.err).toContain('the sequence or --nets names what the design lacks');
    const net = await run(['step', 'nets/nor-adder.tube', '--sequence', 'close SA', '--nets', 'x1,x9']);
    expect(net.code).toBe(2);
    expect(net.err).toContain("did you mean 'x1'?");
    const syntax = await run(['step', 'nets/nor-adder.tube', '--sequence', 'pulse']);
    expect(syntax.code).toBe(2);
    expect(syntax.err).toContain('the sequence (--sequence) has errors');
    expect(syntax.err).not.toContain('the design has errors');
  });

  it('fit without --kind asks for one, and bad readings are the readings\' errors', async () => {
    const none = await runCommand(['fit', 'r.csv'], { 'r.csv': 'va,vg,ia\n100,0,0.001\n' });
    expect(none.code).toBe(2);
    expect(none.err).toMatch(/name the model kind to fit: --kind koren-triode/);
    expect(none.err).not.toContain("not ''");
    const bad = await runCommand(['fit', 'r.csv', '--kind', 'koren-triode'], { 'r.csv': 'va,vg\n1,2\n' });
    expect(bad.code).toBe(2);
    expect(bad.err).toContain('the readings have errors');
    expect(bad.err).not.toContain('the design has errors');
  });
});

describe('step prints every watched net (issue #17)', () => {
  it('a state longer than its column goes on below the row, every digit there, none cut', async () => {
    const r = await runCommand(['step', 'nets/crate-tally.tube', '--sequence', 'docs/examples/crate-count.seq']);
    const watched = r.out.split('\n').filter((l) => /^ +\d+\. /.test(l)).length;
    expect(watched).toBeGreaterThan(16);
    const lines = r.out.split('\n');
    const header = lines.findIndex((l) => l.startsWith('  step  action'));
    const column = lines[header]!.indexOf('state');
    // The start row and the lines of digits under it, down to the next row.
    const start = [lines[header + 1]!.slice(column).split(' ')[0]!];
    for (let i = header + 2; /^ +[01]+$/.test(lines[i]!); i++) start.push(lines[i]!.trim());
    expect(start.join('')).toMatch(new RegExp(`^[01]{${watched}}$`));
    expect(r.out).not.toMatch(/[01]…/);
    for (const line of lines) expect(line.length, line).toBeLessThanOrEqual(80);
  });
});
