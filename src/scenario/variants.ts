/**
 * Design variants: a scenario may list variants, each replacing some design
 * fields (stimulus distribution, trial list, conditions, response stage,
 * trials) of the base scenario. Each variant becomes a scenario of its own,
 * validated by the same schema, so errors name the variant and the field.
 */
import { dirname, resolve } from 'node:path';
import { readStructuredFile, validate } from './load.js';
import { readTrialList } from './trialList.js';
import { scenarioSchema, type Scenario } from './schema.js';

export interface NamedDesign {
  /** 'base' for the scenario itself, else the variant's name. */
  variant: string;
  scenario: Scenario;
}

function conditionNames(raw: Record<string, unknown> | undefined): string[] {
  return raw && Array.isArray(raw.conditions) ? (raw.conditions as { name?: unknown }[]).map((c) => String(c?.name)) : [];
}

/**
 * Read and validate a scenario file. Trial-list files (of the base and of
 * every variant) are read here and inlined, so the scenario hash covers their
 * contents and workers need no file access.
 */
export function readScenario(file: string): Scenario {
  const raw = readStructuredFile(file) as Record<string, unknown>;
  if (raw && typeof raw === 'object') {
    if (typeof raw.trialList === 'string') raw.trialList = readTrialList(resolve(dirname(file), raw.trialList), conditionNames(raw));
    if (Array.isArray(raw.variants))
      for (const v of raw.variants as Record<string, unknown>[]) {
        if (v && typeof v === 'object' && typeof v.trialList === 'string')
          v.trialList = readTrialList(resolve(dirname(file), v.trialList), conditionNames(v.conditions ? v : raw));
      }
  }
  return validate(scenarioSchema, raw, file);
}

/** The base design followed by each variant, every one a complete scenario without variants. */
export function designVariants(s: Scenario, source: string): NamedDesign[] {
  const { variants, ...base } = s;
  const out: NamedDesign[] = [{ variant: 'base', scenario: base as Scenario }];
  for (const v of variants ?? []) {
    const { name, description, ...fields } = v;
    const merged: Record<string, unknown> = { ...base, ...fields, name: `${s.name}.${name}` };
    if (description) merged.description = description;
    // A stimulus distribution given by the variant replaces the base trial list, and vice versa.
    if (fields.stimulus && !fields.trialList) delete merged.trialList;
    out.push({ variant: name, scenario: validate(scenarioSchema, merged, `${source} (variant '${name}')`) });
  }
  return out;
}
