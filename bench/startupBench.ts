import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { loadDesign, solveOperatingPoint } from '../lib/index.js';
import { generateRegister, generateVariedRegister, VARIED_SEED } from './generate.js';

/** One generated design solved as a command and in a running process. */
export interface SolveStartup {
  /** What the design is, for the table. */
  label: string;
  /** The `solve` command's time, and load + solve in this process. */
  commandMs: number;
  inProcessMs: number;
}

/** What a command costs before it does its work, and what `solve` as a command costs beside the same solve in a running process. */
export interface StartupBench {
  /** Median wall times in milliseconds of `node -e 0`, `tubemargin --version` and `tubemargin show` of the small demo. */
  bareMs: number;
  versionMs: number;
  showMs: number;
  /** The registers' size, and each register (the uniform one and the varied one of issue #16) solved. */
  stages: number;
  solves: SolveStartup[];
}

const root = fileURLToPath(new URL('../..', import.meta.url));
const launcher = join(root, 'bin', 'tubemargin.js');

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)] as number;
}

/** Median wall time of a child process `node ...args` over `runs` runs after one warm-up (the file cache). Exit code 1 (a check failed) is a finished run. */
function spawnMs(args: string[], runs: number): number {
  const once = () => {
    const t0 = performance.now();
    try {
      execFileSync(process.execPath, args, { cwd: root, stdio: 'ignore' });
    } catch (e) {
      if ((e as { status?: number }).status !== 1) throw e;
    }
    return performance.now() - t0;
  };
  once();
  return median(Array.from({ length: runs }, once));
}

/**
 * Measures start-up (issue #16): the goals are `--version` and `show` of a small demo
 * within 3× a bare node start, and `solve` of a 1,000-stage design as a command within
 * 2× the in-process load + solve plus that start-up.
 */
export function benchStartup(stages = 1000, runs = 7): StartupBench {
  const bareMs = spawnMs(['-e', '0'], runs);
  const versionMs = spawnMs([launcher, '--version'], runs);
  const showMs = spawnMs([launcher, 'show', 'nets/nor-adder.tube'], runs);
  const dir = mkdtempSync(join(tmpdir(), 'tubemargin-bench-'));
  try {
    const solveOf = (label: string, text: string): SolveStartup => {
      const file = join(dir, 'register.tube');
      writeFileSync(file, text);
      const commandMs = spawnMs([launcher, 'solve', file], runs);
      const inProcess = () => {
        const t0 = performance.now();
        solveOperatingPoint(loadDesign('register.tube', text).design!);
        return performance.now() - t0;
      };
      inProcess();
      return { label, commandMs, inProcessMs: median(Array.from({ length: runs }, inProcess)) };
    };
    const solves = [
      solveOf(`the generated ${stages.toLocaleString('en')}-stage register`, generateRegister(stages)),
      solveOf(`the varied ${stages.toLocaleString('en')}-stage register (seed ${VARIED_SEED})`, generateVariedRegister(stages, VARIED_SEED)),
    ];
    return { bareMs, versionMs, showMs, stages, solves };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** The start-up table of docs/PERFORMANCE.md. */
export function startupTable(r: StartupBench): string {
  const x = (ms: number) => `${(ms / r.bareMs).toFixed(1)}×`;
  const goal = (s: SolveStartup) => (s.commandMs / (s.inProcessMs + r.versionMs)).toFixed(2);
  return [
    `Measured ${new Date().toISOString().slice(0, 10)} on ${process.platform}/${process.arch}, Node ${process.version}, by \`npm run bench\`, or alone by \`node dist/bench/startupBench.js\` (median of 7 runs each).`,
    '',
    '| what | time | against a bare `node -e 0` |',
    '|---|---:|---:|',
    `| \`node -e 0\` | ${r.bareMs.toFixed(0)} ms | 1.0× |`,
    `| \`tubemargin --version\` | ${r.versionMs.toFixed(0)} ms | **${x(r.versionMs)}** |`,
    `| \`tubemargin show nets/nor-adder.tube\` | ${r.showMs.toFixed(0)} ms | **${x(r.showMs)}** |`,
    ...r.solves.flatMap((s) => [`| \`tubemargin solve\` of ${s.label} | ${s.commandMs.toFixed(0)} ms | |`, `| the same load + solve in a running process | ${s.inProcessMs.toFixed(0)} ms | |`]),
    '',
    `- Goals (issue #16): \`--version\` and \`show\` within 3× a bare start; \`solve\` as a command within 2× the in-process solve plus start-up: ${r.solves.map((s) => `${goal(s)}× (${s.label.replace(/ \(.*\)$/, '')})`).join(', ')}.`,
  ].join('\n');
}

if (process.argv[1] === fileURLToPath(import.meta.url)) process.stdout.write(startupTable(benchStartup()) + '\n');
