// The goals of the benchmark, one line each, collected as the sections run and printed together at
// the end of `npm run bench`: the goal, what was measured, and whether it is met.

const goals = [];

/** Records a goal: name, target text, measured text, and met (true, false, or null when not measured). */
export function goal(name, target, measured, met) {
  goals.push({ name, target, measured, met });
}

export function printGoals(log = console.log) {
  const w = Math.max(...goals.map((g) => g.name.length), 4);
  const t = Math.max(...goals.map((g) => g.target.length), 6);
  log(`${'goal'.padEnd(w)}  ${'target'.padEnd(t)}  result   measured`);
  for (const g of goals) {
    const verdict = g.met === null ? 'skipped' : g.met ? 'pass' : 'FAIL';
    log(`${g.name.padEnd(w)}  ${g.target.padEnd(t)}  ${verdict.padEnd(7)}  ${g.measured}`);
  }
}
