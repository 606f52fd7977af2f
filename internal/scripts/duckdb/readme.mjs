// readme.mjs runs the README's DuckDB recipes — the SQL blocks between
// <!-- readme-sql:NAME begin --> and <!-- readme-sql:NAME end --> — verbatim
// against a study (STUDY replaced by its directory) and checks their results
// against `plumb show --json`. It exits 1 on any mismatch or missing block.
//
//   node readme.mjs README.md STUDY_DIR      (runs $PLUMB, default "plumb", show --json)
import { DuckDBInstance } from '@duckdb/node-api';
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';

const [readme, dir] = process.argv.slice(2);
if (!readme || !dir) {
  console.error('usage: node readme.mjs README.md STUDY_DIR');
  process.exit(2);
}
const text = readFileSync(readme, 'utf8');
const blocks = {};
for (const m of text.matchAll(/<!-- readme-sql:(\w+) begin -->\s*```sql\n([\s\S]*?)```\s*<!-- readme-sql:\1 end -->/g)) {
  blocks[m[1]] = m[2];
}
const show = JSON.parse(execFileSync(process.env.PLUMB || 'plumb', ['show', dir, '--json'], { encoding: 'utf8' }));
const instance = await DuckDBInstance.create(':memory:');
const db = await instance.connect();
async function run(name) {
  if (!blocks[name]) throw new Error(`README has no readme-sql:${name} block`);
  const sql = blocks[name].replaceAll("'STUDY/", `'${dir.replaceAll("'", "''")}/`);
  const r = await db.runAndReadAll(sql);
  return r.getRowObjectsJson();
}

let failures = 0;
function check(what, ok, detail) {
  if (!ok) failures++;
  console.log(`${ok ? 'ok  ' : 'FAIL'} readme ${what}${detail ? ': ' + detail : ''}`);
}
const n = show.input.n;
const byID = Object.fromEntries(show.settings.map((s) => [s.setting_id, s]));
const close = (a, b) => (a === null && b === null) || (a !== null && b !== null && Math.abs(Number(a) - Number(b)) <= 1e-12 * Math.max(1, Math.abs(b)));

// settings: one row per setting, plumb's medians, most faithful first
const set = await run('settings');
check('settings rows', set.length === show.settings.length, `${set.length} vs ${show.settings.length}`);
check('settings trustworthiness = plumb show', set.every((r) => byID[r.setting_id] && close(r.trustworthiness_median, byID[r.setting_id].trustworthiness_median)));
check('settings kl = plumb show', set.every((r) => close(r.kl_median, byID[r.setting_id].kl_median)));
check('settings sorted', set.every((r, i) => i === 0 || r.trustworthiness_median === null || Number(set[i - 1].trustworthiness_median) >= Number(r.trustworthiness_median)));

// labels: every point of every scored setting counted once, under its label
const lab = await run('labels');
const perSetting = {};
const labels = new Set();
for (const r of lab) {
  perSetting[r.setting_id] = (perSetting[r.setting_id] || 0) + Number(r.points);
  labels.add(r.label);
  if (!(Number(r.median_spread) >= 0) || !(Number(r.unstable_share) >= 0 && Number(r.unstable_share) <= 1)) {
    check('labels values', false, JSON.stringify(r));
  }
}
const scored = show.settings.filter((s) => s.runs_done >= 2).length;
check('labels settings', Object.keys(perSetting).length === scored, `${Object.keys(perSetting).length} vs ${scored}`);
check('labels points per setting = n', Object.values(perSetting).every((c) => c === n));
check('labels present', labels.size >= 1 && !labels.has(null), [...labels].join(','));

// layout: n rows of the top setting, points 0..n-1, finite coordinates
const lay = await run('layout');
check('layout rows = n', lay.length === n, `${lay.length} vs ${n}`);
check('layout points 0..n-1', lay.every((r, i) => Number(r.point) === i));
check('layout coordinates finite', lay.every((r) => Number.isFinite(Number(r.x)) && Number.isFinite(Number(r.y))));
check('layout is the top setting', close(set[0].trustworthiness_median, Math.max(...show.settings.map((s) => s.trustworthiness_median ?? -Infinity))));

if (failures > 0) {
  console.log(`${failures} README recipe ${failures === 1 ? "check" : "checks"} failed`);
  process.exit(1);
}
console.log('README recipes: all checks passed');
