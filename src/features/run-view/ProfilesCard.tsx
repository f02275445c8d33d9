import { useQuery } from '@tanstack/react-query';
import { useMemo, useState } from 'react';
import { EChart } from '@/components/charts/EChart.tsx';
import { Card } from '@/components/Page.tsx';
import { chartFrame, useDarkMode } from '@/lib/chart-theme.ts';
import { diagnosticsQuery } from './api.ts';
import { buildCorrelationOption, buildSigmaOption } from './options.ts';
import type { ViewState } from './view-state.ts';

/** Static stability profile, QG-versus-model correlation and the solver's figures at the chosen valid time. */
export function ProfilesCard({ runId, view }: { runId: string; view: ViewState }) {
  const dark = useDarkMode();
  const [log, setLog] = useState(true);
  const diagnostics = useQuery(diagnosticsQuery(runId, view.member));
  const d = diagnostics.data;
  const step = d?.steps.find((s) => s.step === view.step);
  const frame = chartFrame(dark);
  const sigmaOption = useMemo(() => (d && step ? buildSigmaOption(d.levelsHpa, step.sigma, log, frame) : null), [d, step, log, frame]);
  const hasCorrelation = !!step?.correlation && step.correlation.some((c) => c !== null);
  const corrOption = useMemo(() => (d && step?.correlation && hasCorrelation ? buildCorrelationOption(d.levelsHpa, step.correlation, frame) : null), [d, step, hasCorrelation, frame]);

  if (diagnostics.isError) {
    return (
      <Card title="Diagnosis">
        <p role="alert" className="text-caution">
          The diagnosis cannot be shown: {diagnostics.error.message}
        </p>
      </Card>
    );
  }
  if (!d || !step) {
    return (
      <Card title="Diagnosis">
        <p className="text-ink-muted">{d ? `No diagnosis at +${view.step} h.` : 'Loading the diagnosis…'}</p>
      </Card>
    );
  }
  return (
    <div className="grid gap-4 lg:grid-cols-2">
      <Card title="Static stability σ">
        <div className="mb-1 flex items-center justify-between text-2xs text-ink-muted">
          <span className="num">
            f₀ = {d.f0.toExponential(3)} s⁻¹ · residual {step.residual.toExponential(1)} · solve {Math.round(step.solveMs)} ms
            {d.averagedMembers.length ? ` · mean of ${d.averagedMembers.length} members` : ''}
          </span>
          <label className="flex items-center gap-1">
            <input type="checkbox" checked={log} onChange={(e) => setLog(e.target.checked)} /> log scale
          </label>
        </div>
        <div className="h-64">{sigmaOption ? <EChart option={sigmaOption} label="Static stability sigma against pressure" className="h-full w-full" /> : null}</div>
        <p className="text-2xs text-ink-muted">σ from the domain's mean temperature profile; the mid-troposphere is usually near 2×10⁻⁶ m² Pa⁻² s⁻¹, far larger values in the stratosphere.</p>
        {step.warnings.length ? (
          <ul className="mt-1 list-disc pl-4 text-2xs text-caution">
            {step.warnings.map((w) => (
              <li key={w}>{w}</li>
            ))}
          </ul>
        ) : null}
      </Card>
      <Card title="QG versus model omega">
        {corrOption ? (
          <>
            <div className="h-64">
              <EChart option={corrOption} label="Pattern correlation between QG omega and the model's omega per level" className="h-full w-full" />
            </div>
            <p className="text-2xs text-ink-muted">
              Pattern correlation per level between the diagnosed QG omega and the model's own omega. Near 1: the model's ascent is mostly forced by the
              large-scale flow; low values: convection, terrain or small-scale processes dominate, and the QG signal says less.
            </p>
          </>
        ) : (
          <p className="py-10 text-center text-ink-muted">This run's file carries no model omega, so there is nothing to compare the QG diagnosis with.</p>
        )}
      </Card>
    </div>
  );
}
