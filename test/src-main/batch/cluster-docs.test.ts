/**
 * The scheduler examples of docs/cluster.md are the files in docs/cluster/, word for word,
 * and they work: the Slurm array script runs as each array task would (bash, with the
 * variables Slurm sets: SLURM_ARRAY_TASK_ID, SLURM_ARRAY_TASK_COUNT, SLURM_CPUS_PER_TASK),
 * the merge script records the batch, and the Kubernetes Indexed Job's command runs as
 * each pod would (sh, with JOB_COMPLETION_INDEX) for every index of its `completions`.
 * No scheduler is started: Slurm and Kubernetes only set those variables and start the
 * command, as their documentation of job arrays and Indexed Jobs describes.
 */
import { spawnSync } from 'node:child_process';
import { chmodSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeProject, type Project } from '../runs/helpers.js';

const ROOT = path.resolve(import.meta.dirname, '../../..');
const CLI = path.join(ROOT, 'dist/cli.js');
const DOCS = path.join(ROOT, 'docs');
const read = (f: string) => readFileSync(path.join(DOCS, f), 'utf8');
const hasYaml = spawnSync('/usr/bin/python3', ['-c', 'import yaml'], { encoding: 'utf8' }).status === 0;

let p: Project;
let bin: string;
const grid = {
  label: 'asset sets',
  base: { riskfree: 'bill_yield', model: { kind: 'linear' } },
  grid: { assets: [['brinemoor-ferries', 'corvane-saltworks'], 'all'], 'model.factors': [['harbor'], ['harbor', 'ember', 'ledger']], 'estimator.stage': ['first', 'second'] },
};

function plan(name: string): string {
  const dir = path.join(p.dir, name);
  const gridFile = path.join(p.dir, 'grid.json');
  writeFileSync(gridFile, JSON.stringify(grid));
  const r = spawnSync(process.execPath, [CLI, 'batch', 'plan', gridFile, '--db', p.dbPath, '--out', dir], { encoding: 'utf8' });
  expect(r.status, r.stderr).toBe(0);
  return dir;
}

function status(dir: string): { done: number; remaining: number; notFitted: unknown[] } {
  return JSON.parse(spawnSync(process.execPath, [CLI, 'batch', 'status', dir, '--json'], { encoding: 'utf8' }).stdout);
}

beforeAll(async () => {
  p = await makeProject();
  p.store.close();
  // `deflator` on PATH, as in the scripts
  bin = path.join(p.dir, 'bin');
  mkdirSync(bin);
  writeFileSync(path.join(bin, 'deflator'), `#!/bin/sh\nexec "${process.execPath}" "${CLI}" "$@"\n`);
  chmodSync(path.join(bin, 'deflator'), 0o755);
}, 120_000);

afterAll(() => {
  if (p) rmSync(p.dir, { recursive: true, force: true });
});

describe('docs/cluster.md', () => {
  it('shows the scheduler files word for word', () => {
    const doc = read('cluster.md');
    for (const f of ['cluster/slurm-shards.sh', 'cluster/slurm-merge.sh', 'cluster/shards-job.yaml']) expect(doc).toContain(read(f).trimEnd());
    expect(doc).toContain('sbatch --parsable --array=0-7');
    expect(doc).toContain('completionMode: Indexed');
  });

  it('Slurm: each array task runs its shard; the merge script records the batch', () => {
    const dir = plan('slurm');
    const env = { ...process.env, PATH: `${bin}:${process.env.PATH}`, BATCH_DIR: dir, SLURM_ARRAY_TASK_COUNT: '3', SLURM_CPUS_PER_TASK: '1' };
    const script = path.join(DOCS, 'cluster/slurm-shards.sh');
    const missing = spawnSync('bash', [script], { encoding: 'utf8', env: { ...env, SLURM_ARRAY_TASK_COUNT: '' } });
    expect(missing.status).not.toBe(0);
    expect(missing.stderr).toMatch(/SLURM_ARRAY_TASK_ID: submit with sbatch --array=0-N/);
    for (const id of ['0', '1', '2']) {
      const r = spawnSync('bash', [script], { encoding: 'utf8', env: { ...env, SLURM_ARRAY_TASK_ID: id } });
      expect(r.status, r.stderr).toBe(0);
      expect(r.stdout).toMatch(new RegExp(`^Shard ${id}/3: [23] tasks`));
    }
    expect(status(dir)).toMatchObject({ done: 8, remaining: 0 });
    const m = spawnSync('bash', [path.join(DOCS, 'cluster/slurm-merge.sh')], { encoding: 'utf8', env: { ...env, PROJECT_DB: p.dbPath } });
    expect(m.status, m.stderr).toBe(0);
    expect(m.stdout).toContain('Every task is done');
    expect(m.stdout).toMatch(/Batch "asset sets": 8 tasks, 6 fitted, 2 not fitted/);
    expect(m.stdout).toMatch(/Recorded as run \d+/);
  }, 120_000);

  it.skipIf(!hasYaml)(`Kubernetes: the Indexed Job's command runs every completion index${hasYaml ? '' : ' (skipped: /usr/bin/python3 has no yaml module to read the manifest)'}`, () => {
    const job = JSON.parse(
      spawnSync('/usr/bin/python3', ['-c', 'import json, sys, yaml; print(json.dumps(yaml.safe_load(open(sys.argv[1]))))', path.join(DOCS, 'cluster/shards-job.yaml')], { encoding: 'utf8' }).stdout,
    ) as { kind: string; spec: { completions: number; completionMode: string; template: { spec: { containers: { command: string[]; env: { name: string; value: string }[] }[] } } } };
    expect(job.kind).toBe('Job');
    expect(job.spec.completionMode).toBe('Indexed');
    const c = job.spec.template.spec.containers[0];
    const shards = c.env.find((e) => e.name === 'SHARDS')!.value;
    expect(Number(shards)).toBe(job.spec.completions);
    const dir = plan('k8s');
    for (let i = 0; i < job.spec.completions; i++) {
      const env = { ...process.env, PATH: `${bin}:${process.env.PATH}`, ...Object.fromEntries(c.env.map((e) => [e.name, e.value])), BATCH_DIR: dir, JOB_COMPLETION_INDEX: String(i) };
      const r = spawnSync(c.command[0], c.command.slice(1), { encoding: 'utf8', env });
      expect(r.status, r.stderr).toBe(0);
      expect(r.stdout).toMatch(new RegExp(`^Shard ${i}/${shards}: 1 tasks`));
    }
    expect(status(dir)).toMatchObject({ done: 8, remaining: 0 });
    expect(status(dir).notFitted).toHaveLength(2);
  }, 120_000);
});
