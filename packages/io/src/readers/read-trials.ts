import { TuningforkError, checkInteger, checkOneOf, closestKey, resolveOptions, type ResultWarning, type TrialTable } from '@tuningfork/core';
import { CSV_DEFAULTS } from '../csv/csv-options.js';
import { CELL_BAD, CELL_MISSING, classifyCell, makeNullTokens, type NullTokens } from '../internal/number-text.js';
import { readTable, type CsvParseSettings, type LocatedTable, type TableFormat } from '../internal/read-table.js';

/** The TrialTable fields a trials file can provide. */
export type TrialField = 'trial' | 'cueTime' | 'choiceTime' | 'choice' | 'outcomeTime' | 'reward';

const FIELDS: readonly TrialField[] = ['trial', 'cueTime', 'choiceTime', 'choice', 'outcomeTime', 'reward'];
const TIME_FIELDS: readonly TrialField[] = ['cueTime', 'choiceTime', 'outcomeTime'];
/** An option index as text: decimal digits only. */
const DIGITS = /^\d+$/;
/** Choices are stored in an Int32Array. */
const INT32_MAX = 2147483647;

/** Options of readTrials. */
export interface ReadTrialsOptions {
  /** File format; `'auto'` recognises Arrow IPC by its magic bytes, else reads text. @defaultValue 'auto' */
  format?: TableFormat;
  /**
   * Column of each TrialTable field, when it differs from the field name. Only `trial` must be
   * present; a missing time or reward column gives NaN, a missing choice column −1.
   * @defaultValue each field's own name ('trial', 'cueTime', 'choiceTime', 'choice', 'outcomeTime', 'reward')
   */
  columns?: Readonly<Partial<Record<TrialField, string>>>;
  /** Unit of the time columns (cueTime, choiceTime, outcomeTime); converted to seconds. @defaultValue 's' */
  timeUnit?: 's' | 'ms';
  /**
   * Choice labels in option order: a choice cell may hold a label (its index is the option) or
   * the index itself. Cells are matched as text, numbers of an Arrow column too (1 → '1'). When
   * a label is itself a number ('1', '2' for two ports), a number cell must be one of the
   * labels: it is never read as an index.
   * @defaultValue ['left', 'right']
   */
  choiceLabels?: readonly string[];
  /** Number of options; 0 means max(choiceLabels.length, largest choice + 1). @defaultValue 0 */
  nOptions?: number;
  /** CSV parsing settings (delimiter, decimal, commentPrefix, nullTokens, chunkBytes). @defaultValue {} */
  csv?: CsvParseSettings;
}

/** Result of readTrials. */
export interface TrialsRead {
  readonly file: string;
  /** The trials, ordered by trial number. */
  readonly trials: TrialTable;
  /** TrialTable fields found in the file (the others are NaN, or −1 for choice). */
  readonly present: readonly TrialField[];
  /** Other columns whose cells are all numbers or missing, in trial order (missing = NaN). */
  readonly extra: Readonly<Record<string, Float64Array>>;
  /** Other columns holding text, in trial order. */
  readonly extraStrings: Readonly<Record<string, readonly string[]>>;
  /** IO_TRIALS_SORTED, IO_TRUNCATED_LAST_LINE. */
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({
  format: 'auto' as TableFormat,
  columns: Object.freeze({}) as Readonly<Partial<Record<TrialField, string>>>,
  timeUnit: 's' as 's' | 'ms',
  choiceLabels: Object.freeze(['left', 'right']) as readonly string[],
  nOptions: 0,
  csv: Object.freeze({}) as CsvParseSettings,
});

interface Getter {
  readonly numbers: Float64Array | undefined;
  readonly texts: readonly string[] | undefined;
}

function cellError(fn: string, located: LocatedTable, column: string, row: number, text: string, expected: string): never {
  const file = located.table.source;
  throw new TuningforkError('TF_BAD_CELL', `${fn}: file '${file}', column '${column}', ${located.where(row)}: cannot read ${JSON.stringify(text)} as ${expected}.`, { fn, file, column, row, line: located.line(row), text });
}

/** Numbers of a column read either as numbers (Arrow) or text (CSV); missing → NaN. */
function numbersOf(fn: string, located: LocatedTable, column: string, g: Getter, nullTokens: NullTokens, decimalComma: boolean): Float64Array {
  if (g.numbers !== undefined) return g.numbers;
  const texts = g.texts!;
  const out = new Float64Array(texts.length);
  const cell = new Float64Array(1);
  for (let i = 0; i < texts.length; i++) {
    const k = classifyCell(texts[i]!, decimalComma, nullTokens, cell);
    if (k === CELL_BAD) cellError(fn, located, column, i, texts[i]!, `a number (decimal mark '${decimalComma ? ',' : '.'}')`);
    out[i] = k === CELL_MISSING ? NaN : cell[0]!;
  }
  return out;
}

/**
 * Read a per-trial table (`trial,…`) from CSV/TSV or Arrow IPC into a core TrialTable.
 *
 * `trial` must be an integer in every row and unique; rows are ordered by it (warning
 * `IO_TRIALS_SORTED` if the file was not). The fields cueTime, choiceTime, outcomeTime (times,
 * converted to seconds), choice (an option index or a label from `choiceLabels`; empty = no
 * choice, −1) and reward (a number, NaN when empty) are taken where their columns exist; other
 * columns are returned in `extra` (numeric) or `extraStrings` (text).
 *
 * @param path - CSV/TSV or Arrow IPC file.
 * @param options - See ReadTrialsOptions.
 * @returns `{ trials, present, extra, extraStrings, warnings }`.
 * @throws {TuningforkError} TF_BAD_FILE, TF_MISSING_COLUMN (no trial column, with the closest
 *   name) as readCsv; TF_BAD_CELL for a non-integer or repeated trial number, a non-numeric
 *   time or reward, or a choice that is neither an index below nOptions (and below 2^31) nor a
 *   label, or, with number-like labels, a number that is not a label (naming file, column and
 *   line).
 *
 * @example
 * ```ts
 * const { trials } = await readTrials('trials.csv', { columns: { cueTime: 'cue_on' } });
 * trials.choice; // Int32Array: 0 left, 1 right, -1 none
 * ```
 */
export async function readTrials(path: string, options: ReadTrialsOptions = {}): Promise<TrialsRead> {
  const fn = 'readTrials';
  const o = resolveOptions(fn, DEFAULTS, options);
  const timeUnit = checkOneOf(fn, 'timeUnit', o.timeUnit, ['s', 'ms'] as const);
  const fixedOptions = checkInteger(fn, 'nOptions', o.nOptions, 0);
  if (!Array.isArray(o.choiceLabels) || !o.choiceLabels.every((l) => typeof l === 'string' && l.length > 0)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: choiceLabels must be an array of non-empty strings.`, { fn, option: 'choiceLabels' });
  }
  if (o.columns === null || typeof o.columns !== 'object') throw new TuningforkError('TF_BAD_OPTION', `${fn}: columns must be an object of field → column name.`, { fn, option: 'columns' });
  for (const [k, v] of Object.entries(o.columns)) {
    if (!(FIELDS as readonly string[]).includes(k)) {
      const hint = closestKey(k, FIELDS);
      throw new TuningforkError('TF_UNKNOWN_OPTION', `${fn}: columns.${k} is not a trial field.${hint ? ` Did you mean '${hint}'?` : ''} Fields: ${FIELDS.join(', ')}.`, { fn, option: `columns.${k}`, ...(hint ? { suggestion: hint } : {}) });
    }
    if (typeof v !== 'string' || v.length === 0) throw new TuningforkError('TF_BAD_OPTION', `${fn}: columns.${k} must be a column name.`, { fn, option: `columns.${k}` });
  }
  const colOf = (f: TrialField): string => o.columns[f] ?? f;
  const located = await readTable(fn, path, o.format, o.csv, null, true);
  const table = located.table;
  const fields = table.fields;
  if (!fields.includes(colOf('trial'))) {
    const hint = closestKey(colOf('trial'), fields);
    throw new TuningforkError('TF_MISSING_COLUMN', `${fn}: file '${path}' has no column '${colOf('trial')}'.${hint ? ` Did you mean '${hint}'?` : ''} Its columns are: ${fields.map((f) => `'${f}'`).join(', ')}.`, { fn, file: path, column: colOf('trial'), ...(hint ? { suggestion: hint } : {}) });
  }
  const decimalComma = o.csv.decimal === ',';
  const nullTokens = makeNullTokens(o.csv.nullTokens ?? CSV_DEFAULTS.nullTokens, decimalComma);
  const getter = (column: string): Getter => ({ numbers: table.columns[column], texts: table.strings[column] });
  const n = table.rows;
  // Trial numbers.
  const trialRaw = numbersOf(fn, located, colOf('trial'), getter(colOf('trial')), nullTokens, decimalComma);
  for (let i = 0; i < n; i++) {
    const v = trialRaw[i]!;
    if (!Number.isInteger(v) || Math.abs(v) > 2147483647) cellError(fn, located, colOf('trial'), i, v === v ? String(v) : '', 'an integer trial number');
  }
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => trialRaw[a]! - trialRaw[b]! || a - b);
  for (let k = 1; k < n; k++) {
    if (trialRaw[order[k]!] === trialRaw[order[k - 1]!]) {
      const i = Math.max(order[k]!, order[k - 1]!);
      const file = path;
      throw new TuningforkError('TF_BAD_CELL', `${fn}: file '${file}', column '${colOf('trial')}', ${located.where(i)}: trial ${trialRaw[i]} appears more than once (also ${located.where(Math.min(order[k]!, order[k - 1]!))}). Trial numbers must be unique.`, { fn, file, column: colOf('trial'), row: i, line: located.line(i), trial: trialRaw[i] });
    }
  }
  const warnings: ResultWarning[] = [...table.warnings];
  let sorted = true;
  for (let i = 1; i < n; i++) if (trialRaw[i]! < trialRaw[i - 1]!) sorted = false;
  if (!sorted) warnings.push({ code: 'IO_TRIALS_SORTED', message: `${fn}: file '${path}': rows were not in trial order; they were sorted by trial number.`, details: { file: path } });
  const take = (src: Float64Array): Float64Array => Float64Array.from(order, (i) => src[i]!);
  const present: TrialField[] = ['trial'];
  const numeric = (f: TrialField): Float64Array => {
    const col = colOf(f);
    if (!fields.includes(col)) return new Float64Array(n).fill(NaN);
    present.push(f);
    const v = take(numbersOf(fn, located, col, getter(col), nullTokens, decimalComma));
    if (timeUnit === 'ms' && TIME_FIELDS.includes(f)) for (let i = 0; i < n; i++) v[i] = v[i]! / 1000;
    return v;
  };
  const cueTime = numeric('cueTime');
  const choiceTime = numeric('choiceTime');
  const outcomeTime = numeric('outcomeTime');
  const reward = numeric('reward');
  // Choices: index or label; empty → -1.
  const choice = new Int32Array(n).fill(-1);
  const choiceCol = colOf('choice');
  let maxChoice = -1;
  if (fields.includes(choiceCol)) {
    present.push('choice');
    const g = getter(choiceCol);
    // Labels that are themselves digits ('1', '2' for ports 1 and 2) make a digit cell that is no
    // label ambiguous (an index, or an unlisted port?): such cells are rejected, not guessed.
    const numericLabels = o.choiceLabels.some((l) => DIGITS.test(l));
    for (let k = 0; k < n; k++) {
      const i = order[k]!;
      // Numbers (Arrow) go through their text, so a file gives the same choices as CSV or Arrow.
      let text: string;
      if (g.numbers !== undefined) {
        const v = g.numbers[i]!;
        if (v !== v) continue;
        text = String(v);
      } else {
        text = g.texts![i]!.trim();
        if (text === '' || nullTokens.texts.has(text)) continue;
      }
      const label = o.choiceLabels.indexOf(text);
      const c = label >= 0 ? label : DIGITS.test(text) && !numericLabels ? Number(text) : NaN;
      if (!Number.isInteger(c) || c < 0 || c > INT32_MAX || (fixedOptions > 0 && c >= fixedOptions)) {
        const expected = numericLabels
          ? `a choice: one of the labels ${o.choiceLabels.map((l) => `'${l}'`).join(', ')} (the labels are numbers, so a number that is not a label cannot be read as an option index; list every option in choiceLabels)`
          : `a choice: an option index 0…${fixedOptions > 0 ? fixedOptions - 1 : INT32_MAX} or one of the labels ${o.choiceLabels.map((l) => `'${l}'`).join(', ')}`;
        cellError(fn, located, choiceCol, i, g.texts?.[i] ?? text, expected);
      }
      choice[k] = c;
      if (c > maxChoice) maxChoice = c;
    }
  }
  const nOptions = fixedOptions > 0 ? fixedOptions : Math.max(o.choiceLabels.length, maxChoice + 1);
  const used = new Set([...FIELDS.map(colOf)]);
  const extra: Record<string, Float64Array> = {};
  const extraStrings: Record<string, string[]> = {};
  for (const f of fields) {
    if (used.has(f)) continue;
    const g = getter(f);
    if (g.numbers !== undefined) {
      extra[f] = take(g.numbers);
      continue;
    }
    const texts = g.texts!;
    const cell = new Float64Array(1);
    const v = new Float64Array(n);
    let allNumbers = true;
    for (let i = 0; i < n && allNumbers; i++) {
      const k = classifyCell(texts[i]!, decimalComma, nullTokens, cell);
      if (k === CELL_BAD) allNumbers = false;
      else v[i] = k === CELL_MISSING ? NaN : cell[0]!;
    }
    if (allNumbers) extra[f] = take(v);
    else extraStrings[f] = order.map((i) => texts[i]!);
  }
  const trials: TrialTable = {
    trial: Int32Array.from(order, (i) => trialRaw[i]!),
    cueTime,
    choiceTime,
    choice,
    outcomeTime,
    reward,
    nOptions,
  };
  return { file: path, trials, present, extra, extraStrings, warnings };
}
