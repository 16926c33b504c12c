import { useMemo, useState } from "react";
import { Link, useOutletContext, useParams } from "react-router";
import type { WorkshopDetail } from "../../shared/api/workshops";
import type { PointerElement } from "../../shared/elements/kinds";
import { angleToSteps, degreesPerStep, MICROSTEPPING_CHOICES, motorProfile, sampleScale, gaugeScale, valueToAngle, valueToTravelAngle } from "../../shared/elements/scale";
import type { GaugeScale, MotorProfile } from "../../shared/elements/scale";
import { Button, Card, DoneNote, ErrorNote, Loading } from "../components/ui";
import { ProblemList } from "../features/panels/components";
import { MotionCard } from "../features/panels/MotionCard";
import { usePanel, useReplacePanel } from "../features/panels/queries";

/**
 * One pointer's scale and motor: the value-to-angle curve plotted, its points in an editable
 * table, and the motor steps for any value typed in. Saved into the panel definition.
 */
export function PanelScale() {
  const w = useOutletContext<WorkshopDetail>();
  const { panelId = "", elementId = "" } = useParams();
  const panel = usePanel(w.id, panelId);
  if (panel.isPending) return <Loading what="Opening the pointer" />;
  if (panel.error) return <ErrorNote error={panel.error} />;
  const el = panel.data.definition.elements.find((e) => e.id === elementId);
  if (!el || el.kind !== "pointer") return <ErrorNote error={new Error("This panel has no pointer with that identifier.")} />;
  return (
    <ScaleEditor
      key={el.id}
      workshop={w}
      panelId={panelId}
      panelName={panel.data.name}
      airframeId={panel.data.airframeId}
      updatedAt={panel.data.updatedAt}
      pointer={el}
      definition={panel.data.definition}
    />
  );
}

type Row = { value: string; angle: string };

const DEFAULT_MOTOR: MotorProfile = {
  fullStepsPerTurn: 1080,
  microstepping: 4,
  sweep: { kind: "limited", minDegrees: 0, maxDegrees: 315 },
  maxStepsPerSecond: 2400,
  accelerationStepsPerSecond2: 12000,
  direction: "normal",
  zeroOffsetDegrees: 0,
};

function ScaleEditor({
  workshop,
  panelId,
  panelName,
  airframeId,
  updatedAt,
  pointer,
  definition,
}: {
  workshop: WorkshopDetail;
  panelId: string;
  panelName: string;
  airframeId: string;
  updatedAt: string;
  pointer: PointerElement;
  definition: Parameters<ReturnType<typeof useReplacePanel>["mutate"]>[0];
}) {
  const canWrite = workshop.abilities.includes("bench.write");
  const replace = useReplacePanel(workshop.id, panelId);
  const initial = pointer.scale;
  const [rows, setRows] = useState<Row[]>(initial.kind === "sweep" ? initial.points.map((p) => ({ value: String(p.value), angle: String(p.angle) })) : []);
  const [interpolation, setInterpolation] = useState(initial.kind === "sweep" ? initial.interpolation : "linear");
  const [circle, setCircle] = useState(
    initial.kind === "full-circle" ? { period: String(initial.period), angleAtZero: String(initial.angleAtZero), turn: initial.turn } : { period: "1000", angleAtZero: "0", turn: "clockwise" as const },
  );
  const [motorOn, setMotorOn] = useState(!!pointer.motor);
  const [motor, setMotor] = useState<Record<string, string>>(() => {
    const m = pointer.motor ?? { ...DEFAULT_MOTOR, sweep: initial.kind === "full-circle" ? { kind: "continuous" as const } : DEFAULT_MOTOR.sweep };
    return {
      stepSize: m.fullStepsPerTurn !== undefined ? "turn" : "degrees",
      fullStepsPerTurn: String(m.fullStepsPerTurn ?? 1080),
      degreesPerFullStep: String(m.degreesPerFullStep ?? 1.8),
      microstepping: String(m.microstepping),
      sweep: m.sweep.kind,
      minDegrees: m.sweep.kind === "limited" ? String(m.sweep.minDegrees) : "0",
      maxDegrees: m.sweep.kind === "limited" ? String(m.sweep.maxDegrees) : "315",
      maxStepsPerSecond: String(m.maxStepsPerSecond),
      accelerationStepsPerSecond2: String(m.accelerationStepsPerSecond2),
      direction: m.direction,
      zeroOffsetDegrees: String(m.zeroOffsetDegrees),
    };
  });
  const [probe, setProbe] = useState("");

  const n = (s: string) => (s.trim() === "" ? Number.NaN : Number(s));
  const scaleCandidate =
    initial.kind === "sweep"
      ? { kind: "sweep", interpolation, points: rows.map((r) => ({ value: n(r.value), angle: n(r.angle) })) }
      : { kind: "full-circle", period: n(circle.period), angleAtZero: n(circle.angleAtZero), turn: circle.turn };
  const scaleParsed = gaugeScale.safeParse(scaleCandidate);
  const motorCandidate = {
    ...(motor.stepSize === "turn" ? { fullStepsPerTurn: n(motor.fullStepsPerTurn) } : { degreesPerFullStep: n(motor.degreesPerFullStep) }),
    microstepping: n(motor.microstepping),
    sweep: motor.sweep === "limited" ? { kind: "limited", minDegrees: n(motor.minDegrees), maxDegrees: n(motor.maxDegrees) } : { kind: "continuous" },
    maxStepsPerSecond: n(motor.maxStepsPerSecond),
    accelerationStepsPerSecond2: n(motor.accelerationStepsPerSecond2),
    direction: motor.direction,
    zeroOffsetDegrees: n(motor.zeroOffsetDegrees),
  };
  const motorParsed = motorProfile.safeParse(motorCandidate);
  const scale: GaugeScale | null = scaleParsed.success ? scaleParsed.data : null;
  const scaleProblems = scaleParsed.success ? [] : scaleParsed.error.issues.map((i) => ({ path: i.path.join("."), message: i.message }));
  const motorProblems = !motorOn || motorParsed.success ? [] : motorParsed.error.issues.map((i) => ({ path: i.path.join("."), message: i.message }));

  const probeValue = Number(probe);
  const probeResult = useMemo(() => {
    if (!scale || probe.trim() === "" || !Number.isFinite(probeValue)) return null;
    const angle = valueToAngle(scale, probeValue);
    const travel = scale.kind === "full-circle" ? valueToTravelAngle(scale, probeValue) : angle.angle;
    const steps = motorOn && motorParsed.success ? angleToSteps(motorParsed.data, motorParsed.data.sweep.kind === "continuous" ? travel : angle.angle) : null;
    return { angle, steps };
  }, [scale, probe, probeValue, motorOn, motorParsed.success, motorParsed.data]);

  function save() {
    if (!scale || (motorOn && !motorParsed.success)) return;
    const next: PointerElement = { ...pointer, scale, motor: motorOn && motorParsed.success ? motorParsed.data : undefined };
    if (!next.motor) delete next.motor;
    replace.mutate({ ...definition, elements: definition.elements.map((e) => (e.id === pointer.id ? next : e)) });
  }

  const setRow = (i: number, key: keyof Row, v: string) => setRows((rs) => rs.map((r, k) => (k === i ? { ...r, [key]: v } : r)));
  const rowProblem = (i: number, key: keyof Row) => scaleProblems.find((p) => p.path === `points.${i}.${key}`)?.message;
  const input = (bad: boolean) => `w-full rounded-md border bg-card px-2 py-1 font-mono text-sm ${bad ? "border-bad" : "border-rule"}`;
  const motorField = (key: string, label: string, hint?: string) => {
    const problem = motorProblems.find((p) => p.path.startsWith(key) || p.path === `sweep.${key}`)?.message;
    return (
      <label className="flex flex-col gap-1 text-sm">
        <span className="font-semibold">{label}</span>
        <input type="number" step="any" value={motor[key]} readOnly={!canWrite} onChange={(e) => setMotor((m) => ({ ...m, [key]: e.target.value }))} className={input(!!problem)} />
        {problem ? <span className="text-bad">✕ {problem}</span> : hint && <span className="text-xs text-ink-soft">{hint}</span>}
      </label>
    );
  };

  return (
    <div className="flex flex-col gap-5">
      <p className="text-sm">
        <Link to={`/w/${workshop.id}/panels/${panelId}`} className="text-ink-soft underline decoration-amber/60 underline-offset-2">
          ← {panelName}
        </Link>
      </p>
      <div>
        <h2 className="text-xl font-bold tracking-tight">{pointer.label}: scale and motor</h2>
        <p className="text-sm text-ink-soft">
          Reads <span className="font-mono">{pointer.value.channel}</span>. Angles are dial degrees, clockwise from 12 o'clock.
        </p>
      </div>
      <div className="grid gap-5 lg:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]">
        <Card title="Value to angle">
          {scale ? <CurvePlot scale={scale} probe={probeResult ? { value: probeValue, angle: scale.kind === "full-circle" ? valueToTravelAngle(scale, probeValue) : probeResult.angle.angle } : null} /> : <p className="text-sm text-bad">▲ The scale has problems; fix them to see the curve.</p>}
        </Card>
        <Card title="Steps for a value">
          <label className="flex flex-col gap-1 text-sm">
            <span className="font-semibold">Value of {pointer.value.channel}</span>
            <input type="number" step="any" value={probe} onChange={(e) => setProbe(e.target.value)} className={input(false)} placeholder="e.g. 120" data-testid="probe-value" />
          </label>
          {probeResult && (
            <dl className="mt-3 grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-sm" data-testid="probe-result">
              <dt className="text-ink-soft">Dial angle</dt>
              <dd className="font-mono">
                {probeResult.angle.angle.toFixed(2)}°{probeResult.angle.pinned && ` (resting on the ${probeResult.angle.pinned} stop)`}
              </dd>
              {probeResult.steps ? (
                <>
                  <dt className="text-ink-soft">Motor steps</dt>
                  <dd className="font-mono">{probeResult.steps.steps}</dd>
                  <dt className="text-ink-soft">Reaches</dt>
                  <dd className="font-mono">
                    {probeResult.steps.reachedAngle.toFixed(3)}° (off by {probeResult.steps.quantisationErrorDegrees.toFixed(3)}°)
                    {probeResult.steps.clampedTo && `, held at the motor's ${probeResult.steps.clampedTo} limit`}
                  </dd>
                </>
              ) : (
                <>
                  <dt className="text-ink-soft">Motor steps</dt>
                  <dd className="text-ink-soft">{motorOn ? "fix the motor profile first" : "no motor profile"}</dd>
                </>
              )}
            </dl>
          )}
          {motorOn && motorParsed.success && (
            <p className="mt-3 text-xs text-ink-soft">
              One step is {degreesPerStep(motorParsed.data).toFixed(4)}° at the pointer.
            </p>
          )}
        </Card>
      </div>
      <div className="grid gap-5 lg:grid-cols-2">
        <Card title="Scale points">
          {initial.kind === "sweep" ? (
            <>
              <label className="mb-3 flex max-w-xs flex-col gap-1 text-sm">
                <span className="font-semibold">Between points</span>
                <select value={interpolation} disabled={!canWrite} onChange={(e) => setInterpolation(e.target.value as typeof interpolation)} className="rounded-md border border-rule bg-card px-2 py-1.5">
                  <option value="linear">straight lines</option>
                  <option value="monotone-cubic">smooth, never overshooting</option>
                </select>
              </label>
              <table className="w-full text-sm" aria-label="Scale points">
                <thead className="text-left text-xs tracking-wide text-ink-soft uppercase">
                  <tr>
                    <th className="py-1 font-semibold">#</th>
                    <th className="py-1 font-semibold">Value</th>
                    <th className="py-1 font-semibold">Angle (°)</th>
                    <th />
                  </tr>
                </thead>
                <tbody>
                  {rows.map((r, i) => (
                    <tr key={i} className="align-top">
                      <td className="py-1 pr-2 font-mono text-xs text-ink-soft">{i + 1}</td>
                      <td className="py-1 pr-2">
                        <input aria-label={`Point ${i + 1} value`} type="number" step="any" value={r.value} readOnly={!canWrite} onChange={(e) => setRow(i, "value", e.target.value)} className={input(!!rowProblem(i, "value"))} />
                        {rowProblem(i, "value") && <p className="text-xs text-bad">✕ {rowProblem(i, "value")}</p>}
                      </td>
                      <td className="py-1 pr-2">
                        <input aria-label={`Point ${i + 1} angle`} type="number" step="any" value={r.angle} readOnly={!canWrite} onChange={(e) => setRow(i, "angle", e.target.value)} className={input(!!rowProblem(i, "angle"))} />
                        {rowProblem(i, "angle") && <p className="text-xs text-bad">✕ {rowProblem(i, "angle")}</p>}
                      </td>
                      <td className="py-1">
                        {canWrite && (
                          <Button className="!px-2 !py-1 text-xs" disabled={rows.length <= 2} onClick={() => setRows((rs) => rs.filter((_, k) => k !== i))} aria-label={`Remove point ${i + 1}`}>
                            Remove
                          </Button>
                        )}
                      </td>
                    </tr>
                  ))}
                </tbody>
              </table>
              {canWrite && (
                <Button className="mt-2" onClick={() => setRows((rs) => [...rs, { value: "", angle: "" }])}>
                  Add a point
                </Button>
              )}
            </>
          ) : (
            <div className="grid gap-3 sm:grid-cols-3">
              {(["period", "angleAtZero"] as const).map((k) => (
                <label key={k} className="flex flex-col gap-1 text-sm">
                  <span className="font-semibold">{k === "period" ? "Value per turn" : "Angle at value 0 (°)"}</span>
                  <input type="number" step="any" value={circle[k]} readOnly={!canWrite} onChange={(e) => setCircle((c) => ({ ...c, [k]: e.target.value }))} className={input(scaleProblems.some((p) => p.path === k))} />
                </label>
              ))}
              <label className="flex flex-col gap-1 text-sm">
                <span className="font-semibold">Turns</span>
                <select value={circle.turn} disabled={!canWrite} onChange={(e) => setCircle((c) => ({ ...c, turn: e.target.value as "clockwise" }))} className="rounded-md border border-rule bg-card px-2 py-1.5">
                  <option value="clockwise">clockwise</option>
                  <option value="counterclockwise">counterclockwise</option>
                </select>
              </label>
            </div>
          )}
          {scaleProblems.filter((p) => !/^points\.\d+\.(value|angle)$/.test(p.path)).map((p) => (
            <p key={p.path} className="mt-2 text-sm text-bad">
              ✕ {p.path ? `${p.path}: ` : ""}
              {p.message}
            </p>
          ))}
        </Card>
        <Card title="Motor">
          <label className="mb-3 flex items-center gap-2 text-sm">
            <input type="checkbox" checked={motorOn} disabled={!canWrite} onChange={(e) => setMotorOn(e.target.checked)} className="accent-amber" />
            <span className="font-semibold">This pointer is driven by a stepper motor</span>
          </label>
          {motorOn && (
            <p role="note" className="mb-3 rounded-md border border-amber/50 bg-amber/5 px-3 py-2 text-xs text-ink">
              <span aria-hidden="true" className="mr-1 font-mono">△</span>
              <span className="font-semibold">Caution: </span>
              set the driver's current limit for your motor before connecting it, and check the driver's and
              motor's temperature after a long sweep test; fuse each supply. These figures come from the
              motor's datasheet and your measurements; mains wiring is for a qualified electrician under
              your local codes.
            </p>
          )}
          {motorOn && (
            <div className="grid gap-3 sm:grid-cols-2">
              <label className="flex flex-col gap-1 text-sm">
                <span className="font-semibold">Step size given as</span>
                <select value={motor.stepSize} disabled={!canWrite} onChange={(e) => setMotor((m) => ({ ...m, stepSize: e.target.value }))} className="rounded-md border border-rule bg-card px-2 py-1.5">
                  <option value="turn">full steps per turn</option>
                  <option value="degrees">degrees per full step</option>
                </select>
              </label>
              {motor.stepSize === "turn" ? motorField("fullStepsPerTurn", "Full steps per turn", "at the pointer, after any gearing") : motorField("degreesPerFullStep", "Degrees per full step", "1.8 for a common hybrid stepper")}
              <label className="flex flex-col gap-1 text-sm">
                <span className="font-semibold">Microstepping</span>
                <select value={motor.microstepping} disabled={!canWrite} onChange={(e) => setMotor((m) => ({ ...m, microstepping: e.target.value }))} className="rounded-md border border-rule bg-card px-2 py-1.5">
                  {MICROSTEPPING_CHOICES.map((c) => (
                    <option key={c} value={c}>
                      1/{c}
                    </option>
                  ))}
                </select>
              </label>
              <label className="flex flex-col gap-1 text-sm">
                <span className="font-semibold">Sweep</span>
                <select value={motor.sweep} disabled={!canWrite} onChange={(e) => setMotor((m) => ({ ...m, sweep: e.target.value }))} className="rounded-md border border-rule bg-card px-2 py-1.5">
                  <option value="limited">between two limits</option>
                  <option value="continuous">continuous (no stops)</option>
                </select>
              </label>
              {motor.sweep === "limited" && (
                <>
                  {motorField("minDegrees", "Lowest angle (°)")}
                  {motorField("maxDegrees", "Highest angle (°)")}
                </>
              )}
              {motorField("maxStepsPerSecond", "Fastest steps per second", "microsteps the motor follows without losing any")}
              {motorField("accelerationStepsPerSecond2", "Acceleration (steps/s²)")}
              {motorField("zeroOffsetDegrees", "Angle at step 0 (°)", "where the homed motor points")}
              <label className="flex flex-col gap-1 text-sm">
                <span className="font-semibold">Direction</span>
                <select value={motor.direction} disabled={!canWrite} onChange={(e) => setMotor((m) => ({ ...m, direction: e.target.value }))} className="rounded-md border border-rule bg-card px-2 py-1.5">
                  <option value="normal">normal</option>
                  <option value="reversed">reversed</option>
                </select>
              </label>
            </div>
          )}
          {motorProblems.length > 0 && (
            <ul className="mt-2 text-sm text-bad">
              {motorProblems.map((p) => (
                <li key={p.path}>
                  ✕ <span className="font-mono text-xs">{p.path}</span>: {p.message}
                </li>
              ))}
            </ul>
          )}
        </Card>
      </div>
      {canWrite && (
        <div className="flex flex-col gap-2">
          <div className="flex gap-2">
            <Button tone="primary" onClick={save} disabled={!scale || motorProblems.length > 0 || replace.isPending}>
              {replace.isPending ? "Saving…" : "Save scale and motor"}
            </Button>
          </div>
          {replace.isSuccess && <DoneNote>Saved into the panel definition.</DoneNote>}
          <ProblemList error={replace.error} title="Not saved" />
        </div>
      )}
      <MotionCard
        workshopId={workshop.id}
        panelId={panelId}
        airframeId={airframeId}
        updatedAt={updatedAt}
        pointer={pointer}
        unsavedMotor={sortedJson(motorOn && motorParsed.success ? motorParsed.data : null) !== sortedJson(pointer.motor ?? null)}
      />
    </div>
  );
}

/** JSON with keys sorted at every level: the stored definition comes back in jsonb's key order. */
function sortedJson(value: unknown): string {
  return JSON.stringify(value, (_key, v: unknown) =>
    v && typeof v === "object" && !Array.isArray(v) ? Object.fromEntries(Object.entries(v).sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0))) : v,
  );
}

/** The curve as SVG: value across, dial degrees up, table points marked, and the probe's value. */
function CurvePlot({ scale, probe }: { scale: GaugeScale; probe: { value: number; angle: number } | null }) {
  const samples = sampleScale(scale, { count: 201 });
  const W = 560;
  const H = 300;
  const m = { l: 52, r: 16, t: 14, b: 38 };
  const vs = samples.map((s) => s.value);
  const as = samples.map((s) => s.angle);
  const v0 = Math.min(...vs);
  const v1 = Math.max(...vs);
  const a0 = Math.min(...as, 0);
  const a1 = Math.max(...as);
  const x = (v: number) => m.l + ((v - v0) / (v1 - v0 || 1)) * (W - m.l - m.r);
  const y = (a: number) => H - m.b - ((a - a0) / (a1 - a0 || 1)) * (H - m.t - m.b);
  const path = samples.map((s, i) => `${i ? "L" : "M"}${x(s.value).toFixed(1)},${y(s.angle).toFixed(1)}`).join(" ");
  const ticks = (lo: number, hi: number, count: number) => Array.from({ length: count + 1 }, (_, i) => lo + ((hi - lo) * i) / count);
  const fmt = (v: number) => (Math.abs(v) >= 1000 ? `${Math.round(v / 100) / 10}k` : String(Math.round(v * 10) / 10));
  return (
    <svg viewBox={`0 0 ${W} ${H}`} className="w-full" role="img" aria-label="Value to angle curve" data-testid="scale-curve">
      {ticks(a0, a1, 5).map((a) => (
        <g key={`a${a}`}>
          <line x1={m.l} x2={W - m.r} y1={y(a)} y2={y(a)} stroke="#d9d3c4" strokeWidth={1} />
          <text x={m.l - 6} y={y(a) + 4} textAnchor="end" fontSize={11} fill="#56606a" fontFamily="Roboto Mono, monospace">
            {fmt(a)}°
          </text>
        </g>
      ))}
      {ticks(v0, v1, 6).map((v) => (
        <text key={`v${v}`} x={x(v)} y={H - m.b + 16} textAnchor="middle" fontSize={11} fill="#56606a" fontFamily="Roboto Mono, monospace">
          {fmt(v)}
        </text>
      ))}
      <text x={(m.l + W - m.r) / 2} y={H - 4} textAnchor="middle" fontSize={11} fill="#56606a">
        value
      </text>
      <path d={path} fill="none" stroke="#23292e" strokeWidth={2} />
      {scale.kind === "sweep" &&
        scale.points.map((p, i) => <rect key={i} x={x(p.value) - 3.5} y={y(p.angle) - 3.5} width={7} height={7} fill="#fbfaf6" stroke="#b97d0c" strokeWidth={2} />)}
      {probe && Number.isFinite(probe.angle) && probe.value >= v0 && probe.value <= v1 && (
        <g>
          <line x1={x(probe.value)} x2={x(probe.value)} y1={m.t} y2={H - m.b} stroke="#b97d0c" strokeDasharray="4 3" />
          <circle cx={x(probe.value)} cy={y(probe.angle)} r={5} fill="#e0a526" stroke="#23292e" />
        </g>
      )}
    </svg>
  );
}
