import { loadScenario } from '@pathweave/io';
const io = await import('@pathweave/io');
const { scenario } = await loadScenario(process.argv[2]);
let t = performance.now();
const plan = io.planScenario(scenario);
const built = io.buildPlan(plan);
console.log('buildPlan ms', performance.now() - t, built.users[0].timeline.ids.length);
