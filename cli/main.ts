import { Command, CommanderError } from 'commander';
import { processIo, type CliIo } from './io.js';
import { EXIT } from './load.js';
import { CHECK_HELP, CHECK_SUMMARY, runCheck, type CheckCliOptions } from './check.js';
import { FIT_HELP, FIT_SUMMARY, runFit, type FitCliOptions } from './fit.js';
import { TUNE_HELP, TUNE_SUMMARY, runTune, type TuneCliOptions } from './tune.js';
import { STEP_HELP, STEP_SUMMARY, runStep, type StepCliOptions } from './step.js';
import { PULSE_HELP, PULSE_SUMMARY, runPulse, type PulseCliOptions } from './pulse.js';
import { REPORT_HELP, REPORT_SUMMARY, runReport, type ReportCliOptions } from './report.js';
import { SWEEP_HELP, SWEEP_SUMMARY, runSweep, type SweepCliOptions } from './sweep.js';
import { SHOW_HELP, SHOW_SUMMARY, runShow, type ShowOptions } from './show.js';
import { SOLVE_HELP, SOLVE_SUMMARY, runSolve, type SolveCliOptions } from './solve.js';
import { TUBES_SUMMARY, runTubes } from './tubes.js';

/**
 * Each command's examples: the command line (its continuation lines, if any, after the
 * first) and what it shows. Every help page prints its own (one to three), the top-level
 * page the first of each; every line fits 80 columns (a test holds both).
 */
const COMMAND_EXAMPLES: Record<string, { line: string[]; what: string }[]> = {
  show: [
    { line: ['tubemargin show nets/crate-tally.tube'], what: 'the expanded design: rails, tube types, stages, nets and loops' },
    { line: ['tubemargin show nets/crate-tally.tube --json > crate.json'], what: 'the same as tubemargin.design/1 JSON, which every command reads' },
    { line: ['tubemargin show nets/nor-adder.tube --svg adder.svg'], what: 'a drawing of stages and nets, each net coloured by its worst margin' },
  ],
  solve: [
    { line: ['tubemargin solve nets/nor-adder.tube'], what: 'the DC operating point: every node, section and resistor' },
    { line: ['tubemargin solve nets/crate-tally.tube --hint boff[3]=1'], what: 'starting with one latch of the tally flipped' },
  ],
  check: [
    { line: ['tubemargin check nets/nor-adder.tube'], what: 'worst-case levels and margins: pass, fail with a witness, or undecided' },
    { line: ['tubemargin check nets/crate-tally.tube --age end-of-life --margin 10'], what: 'tubes at the end of their life, 10 V of margin asked: it fails (exit 1)' },
    { line: ['tubemargin check nets/nor-adder.tube --samples 10000 --seed 7'], what: 'adds a Monte Carlo run: yield and margin distributions' },
  ],
  sweep: [
    { line: ['tubemargin sweep nets/crate-tally.tube --rail hv=130:170:10'], what: 'the supply window: a worst-case check at five plate supplies' },
    { line: ['tubemargin sweep nets/nor-adder.tube --rail bp=18:30:1 --rail bias=-16:-6:1'], what: 'over a grid of two rails; the adder fails at its nominal supply (exit 1)' },
  ],
  report: [{ line: ['tubemargin report nets/crate-tally.tube -o crate.html --samples 2000'], what: 'one HTML page with the verdict, nets, plots and yield' }],
  fit: [{ line: ['tubemargin fit docs/examples/bench-readings.csv --kind koren-triode', '-o mytubes.tube'], what: 'a tube type fitted to bench readings (your own, in the same columns)' }],
  tune: [{ line: ['tubemargin tune nets/nor-adder.tube --stage y2 --series E24'], what: 'E24 resistors for stage y2, most margin first; none passes (exit 1)' }],
  step: [
    {
      line: ['tubemargin step nets/irrigation-sequencer.tube', '--sequence "pulse STOP; pulse bed[1]/START; expect bed[1]/on=1"'],
      what: 'the state after each press, and whether bed 1 ends on',
    },
  ],
  pulse: [
    {
      line: ['tubemargin pulse nets/crate-tally.tube --after "pulse RESET" --for 300us', '--input "LINE_A=clock(150V, 0V, period=100us, width=25%)"', '--input "LINE_B=clock(150V, 0V, period=100us, width=25%, delay=50%)"', '--nets on[0],on[1],on[2],on[3] --fastest'],
      what: 'two clock phases in time from reset, then the fastest clock that counts',
    },
  ],
  tubes: [
    { line: ['tubemargin tubes'], what: 'the tube library: types, kinds, ratings and sources' },
    { line: ['tubemargin tubes --json'], what: 'the same as JSON' },
  ],
};

/**
 * A help text for commander, which wraps each line at the terminal's width: the lines of a
 * paragraph are joined so that it wraps as one (hand-wrapped lines re-wrapped at 80 broke
 * mid-sentence), while an indented line (an item of a list) stays a line of its own.
 */
export function reflow(text: string): string {
  const out: string[] = [];
  let joinable = false;
  for (const line of text.split('\n')) {
    const item = line === '' || /^\s/.test(line);
    if (!item && joinable) out[out.length - 1] += ` ${line}`;
    else out.push(line);
    joinable = !item;
  }
  return out.join('\n');
}

/** Examples as help text: each command line (continued with a backslash) and, indented below it, what it shows. */
function examplesText(list: readonly { line: string[]; what: string }[]): string {
  const one = ({ line, what }: { line: string[]; what: string }) => `  ${line.join(' \\\n      ')}\n      ${what}`;
  return `\nExamples:\n${list.map(one).join('\n')}`;
}

const EXAMPLES = `${examplesText([COMMAND_EXAMPLES.check![0]!, COMMAND_EXAMPLES.solve![0]!, COMMAND_EXAMPLES.show![0]!])}
Every command's --help has examples of its own.

Exit codes: 0 success, 1 a check failed, 2 bad input (diagnostics say where).`;

/** The options `check` and `report` share: the requirement, the ageing scenario and the Monte Carlo run. */
function withCheckOptions(command: Command): Command {
  return command
    .option('--margin <VOLTS>', "the noise margin every net must keep; overrides the design's")
    .option('--age <SCENARIO>', 'ageing scenario: new, aged, low-heater, interface, end-of-life', 'new')
    .option('--samples <N>', 'add a Monte Carlo run of N samples: yield, margin distributions, parts behind failures')
    .option('--seed <S>', 'seed of the Monte Carlo run (default 1): the same seed, the same result')
    .option('--distribution <D>', 'how values are drawn: uniform, normal (tolerance = 3σ), graded (default uniform)')
    .option('--workers <K>', 'threads for the Monte Carlo run (default: every core)');
}

/**
 * Runs the command line `argv` (without the node and script names) against `io`; resolves
 * to the exit code. Never throws for bad input: unknown commands or options print a
 * message and give 2.
 */
export async function runCli(argv: string[], io: CliIo): Promise<number> {
  let code: number = EXIT.ok;
  const program = new Command();
  program
    .name('tubemargin')
    .description('Worst-case levels and noise margins for resistor-coupled vacuum-tube logic.')
    .version('0.1.0')
    .option('--check-model', 'also run the internal consistency check of the design model (for debugging)')
    .addHelpText('after', EXAMPLES)
    .exitOverride()
    .configureOutput({ writeOut: io.stdout, writeErr: io.stderr })
    .showHelpAfterError('(run tubemargin --help for the commands)');

  program
    .command('show')
    .summary(SHOW_SUMMARY)
    .description(SHOW_SUMMARY + '\n' + reflow(SHOW_HELP))
    .argument('<file>', 'design file (.tube text or .json)')
    .option('--json', 'print the flat design as tubemargin.design/1 JSON')
    .option('--svg <FILE>', 'draw the design, nets coloured by worst-case margin, to an SVG file')
    .option('--fold', 'draw block instances and arrays as one box each')
    .option('--unfold', 'draw every stage as its own box, however big the design')
    .option('--no-margins', 'draw without running a check (nets uncoloured)')
    .action(async (file: string, opts: ShowOptions) => {
      code = await runShow(file, { ...program.opts(), ...opts }, io);
    });

  // No default for a repeatable option: help would print it as '(default: [])'; the commands read an absent list as empty.
  const collect = (value: string, previous: string[] | undefined) => [...(previous ?? []), value];
  program
    .command('solve')
    .summary(SOLVE_SUMMARY)
    .description(SOLVE_SUMMARY + '\n' + reflow(SOLVE_HELP))
    .argument('<file>', 'design file (.tube text or .json)')
    .option('--hint <NET=1|0>', 'start NET high (1) or low (0); repeat for more nets', collect)
    .option('--close <SWITCH>', 'close a switch or press a button for this solve; repeatable', collect)
    .option('--json', 'print the operating point as tubemargin.solve/1 JSON')
    .option('--at <FILE>', 're-solve a witness of check: a witness object, or a check --json report')
    .option('--at-net <NAME>', 'with --at on a report: the net (or a net of the latch) whose witness to take')
    .action((file: string, opts: SolveCliOptions) => {
      code = runSolve(file, { ...program.opts(), ...opts }, io);
    });

  withCheckOptions(program.command('check').summary(CHECK_SUMMARY).description(CHECK_SUMMARY + '\n' + reflow(CHECK_HELP)).argument('<file>', 'design file (.tube text or .json)'))
    .option('--shrink', 'find a failing set of part values and shrink it to the smallest')
    .option('--json', 'print the report as tubemargin.report/1 JSON')
    .action(async (file: string, opts: CheckCliOptions) => {
      code = await runCheck(file, { ...program.opts(), ...opts }, io);
    });

  program
    .command('sweep')
    .summary(SWEEP_SUMMARY)
    .description(SWEEP_SUMMARY + '\n' + reflow(SWEEP_HELP))
    .argument('<file>', 'design file (.tube text or .json)')
    .option('--rail <NAME=FROM:TO:STEP>', 'a rail to sweep, in volts; give one or two', collect)
    .option('--heater <F>', 'heater voltage as a fraction of nominal (default 1)')
    .option('--margin <VOLTS>', "the noise margin every net must keep; overrides the design's")
    .option('--age <SCENARIO>', 'ageing scenario: new, aged, low-heater, interface, end-of-life', 'new')
    .option('--json', 'print the map as tubemargin.sweep/1 JSON')
    .action(async (file: string, opts: SweepCliOptions) => {
      code = await runSweep(file, { ...program.opts(), ...opts }, io);
    });

  withCheckOptions(program.command('report').summary(REPORT_SUMMARY).description(REPORT_SUMMARY + '\n' + reflow(REPORT_HELP)).argument('<file>', 'design file (.tube text or .json)'))
    .option('-o, --output <FILE>', 'where to write the HTML report')
    .option('--rail <NAME=FROM:TO:STEP>', 'add a supply map over this rail; give one or two', collect)
    .option('--heater <F>', 'heater voltage for the supply map, as a fraction of nominal')
    .action(async (file: string, opts: ReportCliOptions) => {
      code = await runReport(file, { ...program.opts(), ...opts }, io);
    });

  program
    .command('fit')
    .summary(FIT_SUMMARY)
    .description(FIT_SUMMARY + '\n' + reflow(FIT_HELP))
    .argument('<readings>', 'bench readings, CSV')
    .option('--kind <KIND>', 'model kind: koren-triode, koren-pentode, child-langmuir')
    .option('--name <NAME>', 'name of the type written (default BENCH)')
    .option('-o, --output <FILE>', 'write the type definition to FILE')
    .option('--json', 'print the fit as tubemargin.fit/1 JSON')
    .action((file: string, opts: FitCliOptions) => {
      code = runFit(file, { ...program.opts(), ...opts }, io);
    });

  program
    .command('tune')
    .summary(TUNE_SUMMARY)
    .description(TUNE_SUMMARY + '\n' + reflow(TUNE_HELP))
    .argument('<file>', 'design file (.tube text or .json)')
    .option('--stage <NET>', 'the stage (its output net) whose resistors to choose')
    .option('--series <E>', 'preferred-value series: E6, E12, E24, E96 (default E12)')
    .option('--margin <VOLTS>', "the noise margin every net must keep; overrides the design's")
    .option('--age <SCENARIO>', 'ageing scenario: new, aged, low-heater, interface, end-of-life', 'new')
    .option('--json', 'print the choices as tubemargin.tune/1 JSON')
    .action(async (file: string, opts: TuneCliOptions) => {
      code = await runTune(file, { ...program.opts(), ...opts }, io);
    });

  program
    .command('step')
    .summary(STEP_SUMMARY)
    .description(STEP_SUMMARY + '\n' + reflow(STEP_HELP))
    .argument('<file>', 'design file (.tube text or .json)')
    .option('--sequence <FILE|TEXT>', 'the input sequence: a file, or the actions themselves')
    .option('--nets <A,B,…>', 'the nets to watch (default: every logic net)')
    .option('--hint <NET=1|0>', 'start NET high (1) or low (0); repeat for more nets', collect)
    .option('--json', 'print the steps as tubemargin.step/1 JSON')
    .action((file: string, opts: StepCliOptions) => {
      code = runStep(file, { ...program.opts(), ...opts }, io);
    });

  program
    .command('pulse')
    .summary(PULSE_SUMMARY)
    .description(PULSE_SUMMARY + '\n' + reflow(PULSE_HELP))
    .argument('<file>', 'design file (.tube text or .json)')
    .option('--input <DRIVE=WAVEFORM>', "a drive's waveform; repeat for more inputs", collect)
    .option('--for <TIME>', 'how long to simulate: 300us, 2ms')
    .option('--nets <A,B,…>', 'the nets to watch (default: every logic net)')
    .option('--hint <NET=1|0>', 'start NET high (1) or low (0); repeat for more nets', collect)
    .option('--after <FILE|TEXT>', 'step through this sequence (a file, or the actions) first and start from where it leaves the design')
    .option('--stray <FARADS>', "stray capacitance from every net to ground (default: the design's, 10pF unless set)")
    .option('--expect <NET=1,…>', 'states the watched nets must have at the end (exit 1 when not)')
    .option('--fastest', 'search for the fastest clock that still counts in worst case, and the stage that limits it')
    .option('--probe <A,B,…>', 'more nets to record, any net of the design (a grid: bit0/q.g1), for --csv, --json and -o')
    .option('--csv <FILE>', 'write the waveforms of the watched nets and inputs to FILE')
    .option('-o, --output <FILE>', 'write an HTML page with the waveforms, states, delays and fastest clock')
    .option('--json', 'print the run as tubemargin.pulse/1 JSON, waveforms included')
    .action(async (file: string, opts: PulseCliOptions) => {
      code = await runPulse(file, { ...program.opts(), ...opts }, io);
    });

  program
    .command('tubes')
    .summary(TUBES_SUMMARY)
    .description(TUBES_SUMMARY)
    .option('--json', 'print the library as JSON')
    .action((opts: { json?: boolean }) => {
      code = runTubes(opts, io);
    });

  for (const command of program.commands) command.addHelpText('after', examplesText(COMMAND_EXAMPLES[command.name()] ?? []));

  try {
    await program.parseAsync(argv, { from: 'user' });
  } catch (e) {
    if (e instanceof CommanderError) {
      // Help asked for (--help, `help`) is a success; help shown because no command was given
      // is a usage error like any other (commander then throws with exit code 1).
      if (e.code === 'commander.helpDisplayed' || e.code === 'commander.version') return EXIT.ok;
      if (e.code === 'commander.help') return e.exitCode === 0 ? EXIT.ok : EXIT.badInput;
      return EXIT.badInput;
    }
    io.stderr(`internal error: ${(e as Error).stack ?? String(e)}\nplease report this with the design that caused it\n`);
    return 3;
  }
  return code;
}

/** Entry point of the `tubemargin` binary. */
export function runFromProcess(): void {
  // A reader that stops early (`| head`) closes the pipe: the rest of the output has nowhere
  // to go, which is no error of the run. Stop quietly, as command-line tools do.
  for (const stream of [process.stdout, process.stderr]) {
    stream.on('error', (e: NodeJS.ErrnoException) => {
      if (e.code === 'EPIPE') process.exit(process.exitCode ?? 0);
      throw e;
    });
  }
  runCli(process.argv.slice(2), processIo()).then((code) => {
    process.exitCode = code;
  });
}
