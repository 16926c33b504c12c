import { run } from "../judging.bench";
for (let i = 0; i < 3; i++) { const r = await run(); console.log(r.rows[0].value.toFixed(0), r.rows[0].note); }
