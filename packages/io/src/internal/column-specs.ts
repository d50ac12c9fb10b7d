import { TuningforkError, checkBoolean, checkOneOf, closestKey, resolveOptions } from '@tuningfork/core';
import type { ColumnSpec } from '../table.js';

/** A ColumnSpec matched to a field of the file. */
export interface BoundColumn {
  /** Index of the field in the file. */
  readonly index: number;
  /** Header name in the file. */
  readonly name: string;
  /** Name in the result. */
  readonly as: string;
  readonly type: 'number' | 'string';
  readonly finite: boolean;
}

const SPEC_DEFAULTS = Object.freeze({ name: '', as: undefined as string | undefined, type: 'number', required: true, finite: false });

/** A validated ColumnSpec with every default filled in. */
export interface NormalizedSpec {
  readonly name: string;
  readonly as: string;
  readonly type: 'number' | 'string';
  readonly required: boolean;
  readonly finite: boolean;
}

/** Validate the `columns` option (strings or ColumnSpec objects) without looking at a file. */
export function normalizeSpecs(fn: string, specs: readonly (string | ColumnSpec)[]): NormalizedSpec[] {
  if (!Array.isArray(specs)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: columns must be an array of column names or { name, as, type, required, finite } objects, got ${typeof specs}.`, { fn, option: 'columns' });
  }
  const out: NormalizedSpec[] = [];
  const seenAs = new Set<string>();
  const seenName = new Set<string>();
  for (let i = 0; i < specs.length; i++) {
    const raw = specs[i];
    const s = typeof raw === 'string' ? { name: raw } : raw;
    if (s === null || typeof s !== 'object') {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: columns[${i}] must be a column name or a { name, … } object, got ${String(raw)}.`, { fn, option: `columns[${i}]` });
    }
    const o = resolveOptions(`${fn} columns[${i}]`, SPEC_DEFAULTS, s);
    if (typeof o.name !== 'string' || o.name.length === 0) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: columns[${i}].name must be a non-empty string, got ${JSON.stringify(o.name)}.`, { fn, option: `columns[${i}].name` });
    }
    const as = o.as ?? o.name;
    if (typeof as !== 'string' || as.length === 0) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: columns[${i}].as must be a non-empty string.`, { fn, option: `columns[${i}].as` });
    }
    const type = checkOneOf(fn, `columns[${i}].type`, o.type, ['number', 'string'] as const);
    const required = checkBoolean(fn, `columns[${i}].required`, o.required);
    const finite = checkBoolean(fn, `columns[${i}].finite`, o.finite);
    if (finite && type === 'string') {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: columns[${i}] ('${o.name}') is a string column; finite applies to numeric columns only.`, { fn, option: `columns[${i}].finite` });
    }
    if (seenAs.has(as)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: two columns are named '${as}' in the result; give one a different 'as'.`, { fn, option: 'columns', name: as });
    if (seenName.has(o.name)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: column '${o.name}' is listed twice.`, { fn, option: 'columns', name: o.name });
    seenAs.add(as);
    seenName.add(o.name);
    out.push({ name: o.name, as, type, required, finite });
  }
  return out;
}

/**
 * Match column specs to the fields of a file. `null` specs select every field as a number.
 *
 * @throws {TuningforkError} TF_MISSING_COLUMN for a required column absent from the file (naming
 *   the file and the closest field name); TF_BAD_FILE when a selected name occurs twice in the header.
 */
export function bindColumns(
  fn: string,
  file: string,
  fields: readonly string[],
  specs: readonly NormalizedSpec[] | null,
): BoundColumn[] {
  const positions = new Map<string, number[]>();
  fields.forEach((f, i) => {
    const list = positions.get(f);
    if (list) list.push(i);
    else positions.set(f, [i]);
  });
  const want: readonly NormalizedSpec[] = specs ?? fields.map((name) => ({ name, as: name, type: 'number' as const, required: true, finite: false }));
  const out: BoundColumn[] = [];
  for (const s of want) {
    const at = positions.get(s.name);
    if (at === undefined) {
      if (!s.required) continue;
      const hint = closestKey(s.name, fields);
      throw new TuningforkError(
        'TF_MISSING_COLUMN',
        `${fn}: file '${file}' has no column '${s.name}'.${hint !== undefined ? ` Did you mean '${hint}'?` : ''} Its columns are: ${fields.map((f) => `'${f}'`).join(', ')}.`,
        { fn, file, column: s.name, ...(hint !== undefined ? { suggestion: hint } : {}), fields: [...fields] },
      );
    }
    if (at.length > 1) {
      throw new TuningforkError('TF_BAD_FILE', `${fn}: file '${file}' has ${at.length} columns named '${s.name}' (positions ${at.map((i) => i + 1).join(', ')}); rename them so each name is unique.`, { fn, file, column: s.name });
    }
    out.push({ index: at[0]!, name: s.name, as: s.as, type: s.type, finite: s.finite });
  }
  return out;
}
