// Node 20 lacks Object.groupBy and Map.groupBy, which the better-auth schema CLI uses.
if (!Object.groupBy) Object.groupBy = (items, fn) => { const o = Object.create(null); let i = 0; for (const it of items) { const k = fn(it, i++); (o[k] ||= []).push(it); } return o; };
if (!Map.groupBy) Map.groupBy = (items, fn) => { const m = new Map(); let i = 0; for (const it of items) { const k = fn(it, i++); if (!m.has(k)) m.set(k, []); m.get(k).push(it); } return m; };
