const io = await import('@pathweave/io');
const { scenario } = await io.loadScenario(process.argv[2]);
let t = performance.now();
const plan = io.planScenario(scenario);
const built = io.buildPlan(plan);
console.log('buildPlan ms', (performance.now() - t).toFixed(0), built.users[0].timeline.ids.length, built.users[0].timeline.epochs?.length);
