/**
 * size.json: the identity card of a trial-count sweep, written into its run
 * folder (single-machine or merged) and into every shard folder of a round.
 * It records the sweep's settings (the flags of `size`), its designs with
 * their scenario hashes, and the sweep hash over both (engine/sizeRounds.ts),
 * so that merge can rebuild the sweep from a shard alone, refuse shards or
 * run folders of another sweep, and print the exact commands of the next
 * round. It holds nothing measured; summary.json does.
 */
import { join } from 'node:path';
import { z } from 'zod';
import { readJsonRecord } from './jsonRecord.js';
import { writeFileAtomically } from './atomicFile.js';
import { sweepHash, sweepSettingsSchema, type SweepDesign, type SweepSettings } from './sizeRounds.js';

export const SWEEP_FILE = 'size.json';

export const sweepRecordSchema = z
  .object({
    version: z.literal(1),
    name: z.string(),
    /** The scenario file as given to `size` (made absolute), for the commands merge prints. */
    scenarioFile: z.string(),
    sweepHash: z.string().regex(/^[0-9a-f]{64}$/, 'a sha256 in hex'),
    settings: sweepSettingsSchema,
    designs: z.array(z.object({ variant: z.string().min(1), hash: z.string().regex(/^[0-9a-f]{64}$/) }).strict()).min(1),
  })
  .strict();

export type SweepRecord = z.infer<typeof sweepRecordSchema>;

export function sweepRecord(designs: readonly SweepDesign[], settings: SweepSettings, scenarioFile: string): SweepRecord {
  return {
    version: 1,
    name: designs[0].study.scenario.name,
    scenarioFile,
    sweepHash: sweepHash(designs, settings),
    settings,
    designs: designs.map((d) => ({ variant: d.variant, hash: d.study.hash })),
  };
}

export function writeSweepRecord(folder: string, record: SweepRecord): void {
  writeFileAtomically(join(folder, SWEEP_FILE), JSON.stringify(record, null, 2) + '\n');
}

/** size.json of a folder, or null when it has none. */
export function readSweepRecord(folder: string): SweepRecord | null {
  return readJsonRecord(join(folder, SWEEP_FILE), sweepRecordSchema, '`lossprobe size`');
}
