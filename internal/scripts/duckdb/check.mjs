// check.mjs reads a plumb study with DuckDB — one glob per table, no
// plumb code involved — and compares counts and aggregates with what
// `plumb show --json` reports. It exits 1 on any mismatch.
//
//   node check.mjs STUDY_DIR            (runs $PLUMB, default "plumb", show --json)
//   node check.mjs STUDY_DIR SHOW.json  (uses a saved `plumb show STUDY_DIR --json`)
//
// Install once with `npm ci` in this folder (see README.md).
import { DuckDBInstance } from '@duckdb/node-api';
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import path from 'node:path';

const [dir, showFile] = process.argv.slice(2);
if (!dir) {
  console.error('usage: node check.mjs STUDY_DIR [SHOW.json]');
  process.exit(2);
}
const show = JSON.parse(showFile
  ? readFileSync(showFile, 'utf8')
  : execFileSync(process.env.PLUMB || 'plumb', ['show', dir, '--json'], { encoding: 'utf8' }));

const q = (p) => `'${path.join(dir, p).replaceAll("'", "''")}'`;
const instance = await DuckDBInstance.create(':memory:');
const db = await instance.connect();
async function rows(sql) {
  const r = await db.runAndReadAll(sql);
  return r.getRowObjectsJson();
}
async function one(sql) {
  const r = await rows(sql);
  return r[0];
}

let failures = 0;
function check(what, got, want, tol = 0) {
  const g = got === null || got === undefined ? null : Number(got);
  const w = want === null || want === undefined ? null : Number(want);
  const ok = (g === null && w === null) || (g !== null && w !== null && Math.abs(g - w) <= tol * Math.max(1, Math.abs(w)));
  if (!ok) failures++;
  console.log(`${ok ? 'ok  ' : 'FAIL'} ${what}: duckdb ${g} plumb ${w}`);
}

const n = show.input.n;
const done = show.runs_done;
const failed = show.runs_failed;

// runs.parquet
let r = await one(`select count(*) as n, count(*) filter (where status = 'done') as done from read_parquet(${q('runs.parquet')})`);
check('runs.parquet rows', r.n, done + failed);
check('runs.parquet done', r.done, done);

// layouts: one file per done run, n rows each
r = await one(`select count(*) as n, count(distinct run_id) as runs from read_parquet(${q('layouts/*.parquet')})`);
check('layout rows', r.n, done * n);
check('layout runs', r.runs, done);
r = await one(`select count(*) as bad from (select run_id, min(point) as lo, max(point) as hi, count(*) as c
  from read_parquet(${q('layouts/*.parquet')}) group by run_id) where lo <> 0 or hi <> ${n - 1} or c <> ${n}`);
check('layouts with points other than 0..n-1', r.bad, 0);

// traces: one per done run
r = await one(`select count(distinct run_id) as runs from read_parquet(${q('traces/*.parquet')})`);
check('trace runs', r.runs, done);

// every file: plan hash in key-value metadata, root schema REQUIRED
for (const glob of ['runs.parquet', 'layouts/*.parquet', 'traces/*.parquet', 'scores/*.parquet']) {
  if (glob.startsWith('scores') && !show.scored) continue;
  r = await one(`select count(distinct file_name) as files,
      count(*) filter (where decode(key) = 'plumb.plan_hash' and decode(value) = '${show.plan_hash}') as tagged
    from parquet_kv_metadata(${q(glob)})`);
  check(`${glob}: files carrying plumb.plan_hash ${show.plan_hash}`, r.tagged, r.files);
  r = await one(`select count(*) filter (where repetition_type <> 'REQUIRED') as bad from
      (select file_name, first(repetition_type) as repetition_type from parquet_schema(${q(glob)}) group by file_name)`);
  check(`${glob}: files whose root is not REQUIRED`, r.bad, 0);
}

// per setting: recompute medians from the raw tables and compare
const runsDone = await rows(`select setting_id, count(*) as runs, quantile_cont(kl, 0.5) as kl
  from read_parquet(${q('runs.parquet')}) where status = 'done' group by setting_id`);
const byId = Object.fromEntries(runsDone.map((x) => [x.setting_id, x]));
for (const s of show.settings) {
  const d = byId[s.setting_id] || { runs: 0, kl: null };
  check(`setting ${s.setting_id} runs_done`, d.runs, s.runs_done);
  check(`setting ${s.setting_id} kl_median`, d.kl, s.kl_median, 1e-12);
}
if (show.scored) {
  r = await one(`select count(*) as n from read_parquet(${q('scores/settings.parquet')})`);
  check('scores/settings.parquet rows', r.n, show.settings.length);
  r = await one(`select count(*) as n from read_parquet(${q('scores/runs.parquet')})`);
  check('scores/runs.parquet rows', r.n, done);
  const tw = Object.fromEntries((await rows(`select setting_id, quantile_cont(trustworthiness, 0.5) as t
    from read_parquet(${q('scores/runs.parquet')}) group by setting_id`)).map((x) => [x.setting_id, x.t]));
  const dis = Object.fromEntries((await rows(`select setting_id, quantile_cont(disparity, 0.5) as d, count(*) as pairs
    from read_parquet(${q('scores/pairs.parquet')}) group by setting_id`)).map((x) => [x.setting_id, x]));
  const pts = Object.fromEntries((await rows(`select setting_id, count(*) as n, avg(unstable::int) as share
    from read_parquet(${q('scores/points.parquet')}) group by setting_id`)).map((x) => [x.setting_id, x]));
  for (const s of show.settings) {
    check(`setting ${s.setting_id} trustworthiness_median`, tw[s.setting_id] ?? null, s.trustworthiness_median, 1e-12);
    const d = dis[s.setting_id] || { d: null, pairs: 0 };
    check(`setting ${s.setting_id} pairs`, d.pairs, (s.runs_done * (s.runs_done - 1)) / 2);
    check(`setting ${s.setting_id} disparity_median`, d.d, s.disparity_median, 1e-12);
    const p = pts[s.setting_id] || { n: 0, share: null };
    check(`setting ${s.setting_id} point rows`, p.n, s.runs_done >= 2 ? n : 0);
    check(`setting ${s.setting_id} unstable_share`, p.share, s.unstable_share, 1e-12);
  }
  // The readings: R_NX AUC per run, the medoid run's clusters, the labels.
  const auc = Object.fromEntries((await rows(`select setting_id, quantile_cont(rnx_auc, 0.5) as a
    from read_parquet(${q('scores/runs.parquet')}) group by setting_id`)).map((x) => [x.setting_id, x.a]));
  const cl = Object.fromEntries((await rows(`select setting_id, count(*) as n, count(distinct medoid_run) as medoids,
      first(medoid_run) as medoid, sum(size) as size, count(jaccard_mean) as measured,
      count(*) filter (where reading = 'not measured') as unmeasured
    from read_parquet(${q('scores/clusters.parquet')}) group by setting_id`)).map((x) => [x.setting_id, x]));
  const lab = Object.fromEntries((await rows(`select setting_id, count(*) as n, sum(points) as points, count(stable_share) as measured
    from read_parquet(${q('scores/labels.parquet')}) group by setting_id`)).map((x) => [x.setting_id, x]));
  for (const s of show.settings) {
    check(`setting ${s.setting_id} rnx_auc_median`, auc[s.setting_id] ?? null, s.rnx_auc_median, 1e-12);
    const c = cl[s.setting_id] || { n: 0, medoids: 0, medoid: null, size: 0, measured: 0, unmeasured: 0 };
    check(`setting ${s.setting_id} cluster rows`, c.n, s.clusters ?? 0);
    if (c.n > 0) {
      check(`setting ${s.setting_id} clusters of one medoid run`, c.medoids, 1);
      check(`setting ${s.setting_id} medoid_run is the clusters' (equal = 1)`, c.medoid === s.medoid_run ? 1 : 0, 1);
      check(`setting ${s.setting_id} clustered points <= n`, Number(c.size) <= n ? 1 : 0, 1);
      // between-run readings null exactly where stability was not measured
      check(`setting ${s.setting_id} clusters with a Jaccard`, c.measured, s.stability_measured ? c.n : 0);
      check(`setting ${s.setting_id} clusters read "not measured"`, c.unmeasured, s.stability_measured ? 0 : c.n);
    }
    if (show.input.has_labels && s.runs_done > 0 && s.clusters !== null) {
      const l = lab[s.setting_id] || { n: 0, points: 0, measured: 0 };
      check(`setting ${s.setting_id} label points`, l.points, n);
      check(`setting ${s.setting_id} labels with a stable share`, l.measured, s.stability_measured ? l.n : 0);
    }
  }
  for (const [table, file] of [['scores.clusters', 'scores/clusters.parquet'], ['scores.labels', 'scores/labels.parquet']]) {
    r = await one(`select count(*) as n from parquet_kv_metadata(${q(file)}) where decode(key) = 'plumb.table' and decode(value) = '${table}'`);
    check(`${file}: plumb.table = ${table}`, r.n, 1);
  }
}
console.log(failures === 0 ? 'duckdb check: all agree' : `duckdb check: ${failures} mismatches`);
process.exit(failures === 0 ? 0 : 1);
