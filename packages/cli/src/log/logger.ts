import type { MultiBar, SingleBar } from 'cli-progress';

/** Log levels, lowest first. */
export type LogLevel = 'debug' | 'info' | 'warn' | 'error';

/** How the command reports what it does. */
export type LogFormat = 'text' | 'json';

/**
 * One log event. In `--log-format json` mode each event is printed as one JSON object per line
 * (JSON lines) on standard output, with exactly these keys.
 */
export interface LogEvent {
  /** ISO 8601 time of the event (UTC). */
  readonly ts: string;
  readonly level: LogLevel;
  /** Session id the event is about, or null for the batch. */
  readonly session: string | null;
  /** Pipeline step (e.g. 'load', 'analyse', 'write', or a step name of the pipeline), or null. */
  readonly step: string | null;
  /** Completed fraction of the step in [0, 1], or null when the event is not about progress. */
  readonly fraction: number | null;
  readonly message: string;
}

/** Steps of the cli itself, not printed as plain progress lines. */
const QUIET_STEPS = new Set(['hash', 'load', 'write']);

/** Options of createLogger. */
export interface LoggerOptions {
  /** 'text' (bars on a terminal, plain lines otherwise) or 'json' (JSON lines on stdout). */
  readonly format: LogFormat;
  /** Print nothing but errors. */
  readonly quiet: boolean;
  /** Where text logs and bars go. @defaultValue process.stderr */
  readonly err?: NodeJS.WriteStream;
  /** Where results (summaries) and JSON lines go. @defaultValue process.stdout */
  readonly out?: NodeJS.WriteStream;
}

interface Context {
  readonly session?: string | null;
  readonly step?: string | null;
  readonly fraction?: number | null;
}

/**
 * Reports progress and messages in one of four modes: progress bars (text format, stderr is a
 * terminal), plain lines (text format, stderr is not a terminal), JSON lines (`json`), or
 * nothing but errors (`quiet`). Progress events are thinned to step changes and every 25 % of a
 * step (10 % in JSON mode) so that logs stay readable.
 */
export class Logger {
  readonly format: LogFormat;
  readonly quiet: boolean;
  private readonly err: NodeJS.WriteStream;
  private readonly out: NodeJS.WriteStream;
  private bars: MultiBar | null = null;
  private batchBar: SingleBar | null = null;
  private readonly sessionBars = new Map<string, SingleBar>();
  private readonly lastProgress = new Map<string, { step: string; fraction: number }>();
  private batchTotal = 0;
  private batchDone = 0;

  private constructor(options: LoggerOptions, bars: MultiBar | null) {
    this.format = options.format;
    this.quiet = options.quiet;
    this.err = options.err ?? process.stderr;
    this.out = options.out ?? process.stdout;
    this.bars = bars;
  }

  /**
   * Create a logger; loads the progress-bar library only when bars will be drawn (text format,
   * not quiet, stderr a terminal).
   */
  static async create(options: LoggerOptions): Promise<Logger> {
    const err = options.err ?? process.stderr;
    let bars: MultiBar | null = null;
    if (options.format === 'text' && !options.quiet && err.isTTY === true) {
      const mod = await import('cli-progress');
      const cp = (mod as unknown as { default?: typeof mod }).default ?? mod;
      bars = new cp.MultiBar({
        stream: err,
        format: '{label} |{bar}| {percentage}% {info}',
        barsize: 30,
        hideCursor: true,
        clearOnComplete: false,
        autopadding: true,
        gracefulExit: true,
      });
    }
    return new Logger(options, bars);
  }

  /** True when progress bars are drawn. */
  get interactive(): boolean {
    return this.bars !== null;
  }

  /** Log a message at a level. Errors are printed even when quiet. */
  log(level: LogLevel, message: string, ctx: Context = {}): void {
    const ev: LogEvent = {
      ts: new Date().toISOString(),
      level,
      session: ctx.session ?? null,
      step: ctx.step ?? null,
      fraction: ctx.fraction ?? null,
      message,
    };
    if (this.format === 'json') {
      if (this.quiet && level !== 'error') return;
      this.out.write(`${JSON.stringify(ev)}\n`);
      if (level === 'error') this.err.write(`${message}\n`);
      return;
    }
    if (this.quiet && level !== 'error') return;
    if (level === 'debug') return;
    const text = level === 'error' ? message : `${ev.ts.slice(11, 19)} ${level === 'warn' ? 'warning ' : ''}${ev.session !== null ? `[${ev.session}] ` : ''}${message}`;
    if (this.bars !== null) this.bars.log(`${text}\n`);
    else this.err.write(`${text}\n`);
  }

  info(message: string, ctx: Context = {}): void { this.log('info', message, ctx); }
  warn(message: string, ctx: Context = {}): void { this.log('warn', message, ctx); }
  error(message: string, ctx: Context = {}): void { this.log('error', message, ctx); }

  /** Start the batch bar (or log the batch size). */
  startBatch(total: number, message: string): void {
    this.batchTotal = total;
    this.batchDone = 0;
    if (this.bars !== null && total > 1) {
      this.batchBar = this.bars.create(total, 0, { label: 'batch'.padEnd(18), info: `0/${total} sessions` });
    }
    if (total > 1 || this.format === 'json') this.info(message, { step: 'batch', fraction: 0 });
  }

  /** Progress of one session's step; thinned before printing. */
  progress(session: string, step: string, fraction: number): void {
    const f = Math.min(1, Math.max(0, Number.isFinite(fraction) ? fraction : 0));
    if (this.bars !== null) {
      let bar = this.sessionBars.get(session);
      if (bar === undefined) {
        bar = this.bars.create(100, 0, { label: session.slice(0, 18).padEnd(18), info: step });
        this.sessionBars.set(session, bar);
      }
      bar.update(Math.round(f * 100), { info: step });
      return;
    }
    // Plain lines show the pipeline's own steps; the cli's short steps (hash, load, write) are
    // only drawn in bars and sent as JSON events.
    if (this.format === 'text' && QUIET_STEPS.has(step)) return;
    const last = this.lastProgress.get(session);
    const every = this.format === 'json' ? 0.1 : 0.25;
    const due = last === undefined || last.step !== step || f >= 1 || f - last.fraction >= every;
    if (!due || (last !== undefined && last.step === step && last.fraction >= 1)) return;
    this.lastProgress.set(session, { step, fraction: f });
    this.log('info', `${step} ${Math.round(f * 100)}%`, { session, step, fraction: f });
  }

  /** A session left the queue (finished, skipped or failed). */
  sessionEnded(session: string, level: LogLevel, message: string): void {
    const bar = this.sessionBars.get(session);
    if (bar !== undefined && this.bars !== null) {
      this.bars.remove(bar);
      this.sessionBars.delete(session);
    }
    this.lastProgress.delete(session);
    this.batchDone++;
    this.batchBar?.update(this.batchDone, { info: `${this.batchDone}/${this.batchTotal} sessions` });
    this.log(level, message, { session, step: 'batch', fraction: this.batchTotal > 0 ? this.batchDone / this.batchTotal : 1 });
  }

  /** Stop drawing bars (call before printing results). */
  stopBars(): void {
    if (this.bars !== null) {
      this.bars.stop();
      this.bars = null;
      this.batchBar = null;
      this.sessionBars.clear();
    }
  }

  /**
   * Print a human-readable result (summary) on stdout in text mode; in JSON mode the lines are
   * one 'info' event with step 'summary'. Nothing when quiet.
   */
  result(lines: readonly string[]): void {
    this.stopBars();
    if (this.quiet) return;
    if (this.format === 'json') {
      this.log('info', lines.join('\n'), { step: 'summary' });
      return;
    }
    this.out.write(`${lines.join('\n')}\n`);
  }
}
