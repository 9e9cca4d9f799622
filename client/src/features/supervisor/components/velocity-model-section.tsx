import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useEffect, useState } from 'react';
import type { VelocityModelView } from '@shared/schemas/events';
import { Badge } from '@client/components/ui/badge';
import { Button } from '@client/components/ui/button';
import { Input } from '@client/components/ui/input';
import { Select } from '@client/components/ui/select';
import { Loading } from '@client/components/ui/skeleton';
import { Table, TBody, Td, Th, THead, Tr } from '@client/components/ui/table';
import { saveVelocityModel, velocityModelQuery } from '@client/features/supervisor/api/event-catalogue-api';
import { stationsQuery } from '@client/features/supervisor/api/supervisor-api';
import { queryKeys } from '@client/lib/query-keys';
import { ErrorLine, Section } from './common';

/** A layer as the form holds it: the typed text, so a half-typed number is not lost. */
type LayerDraft = { topKm: string; vpKmS: string; vsKmS: string };

const toDraft = (m: VelocityModelView): LayerDraft[] => m.layers.map((l) => ({ topKm: String(l.topKm), vpKmS: String(l.vpKmS), vsKmS: String(l.vsKmS) }));

/**
 * The form's layers as numbers, or the first problem in words (the server checks the model again,
 * naming the layer: increasing tops from 0 km, Vp > Vs > 0).
 */
export function parseLayers(layers: readonly LayerDraft[]): { ok: true; layers: Array<{ topKm: number; vpKmS: number; vsKmS: number }> } | { ok: false; message: string } {
  const out: Array<{ topKm: number; vpKmS: number; vsKmS: number }> = [];
  for (const [i, l] of layers.entries()) {
    const v = { topKm: Number(l.topKm), vpKmS: Number(l.vpKmS), vsKmS: Number(l.vsKmS) };
    if (l.topKm.trim() === '' || l.vpKmS.trim() === '' || l.vsKmS.trim() === '' || !Object.values(v).every(Number.isFinite)) return { ok: false, message: `Layer ${i + 1}: every field needs a number` };
    out.push(v);
  }
  if (out.length === 0) return { ok: false, message: 'The model needs at least one layer' };
  return { ok: true, layers: out };
}

/**
 * The network's 1-D velocity model for locating events (GET/PUT /api/events/velocity-models/:network):
 * layers from the surface down (top depth, Vp, Vs; the last is a half-space). While the network has
 * none of its own, Seisift's placeholder crust is shown and labelled as a default to be replaced.
 * Events located from then on use the saved model; an event already located keeps its origin until
 * it is relocated (on its screen) or changed.
 */
export function VelocityModelSection() {
  const stations = useQuery(stationsQuery());
  const networks = [...new Set((stations.data ?? []).map((s) => s.network))].sort();
  const [network, setNetwork] = useState<string | null>(null);
  const current = network ?? networks[0] ?? null;
  return (
    <Section title="Velocity model for locating events">
      <ErrorLine error={stations.error} />
      {networks.length > 1 ? (
        <label className="mb-2 flex w-fit flex-col text-sm">
          Network
          <Select value={current ?? ''} onChange={(e) => setNetwork(e.target.value)}>
            {networks.map((n) => (
              <option key={n}>{n}</option>
            ))}
          </Select>
        </label>
      ) : null}
      {current === null ? stations.isPending ? <Loading label="Loading the networks…" /> : <p className="text-sm">No stations registered yet, so no network to set a model for.</p> : <ModelForm key={current} network={current} />}
    </Section>
  );
}

function ModelForm({ network }: { network: string }) {
  const qc = useQueryClient();
  const q = useQuery(velocityModelQuery(network));
  const [name, setName] = useState('');
  const [layers, setLayers] = useState<LayerDraft[] | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  useEffect(() => {
    if (q.data && layers === null) {
      setLayers(toDraft(q.data));
      setName(q.data.isDefault ? `${network} crust` : q.data.name);
    }
  }, [q.data, layers, network]);
  const save = useMutation({
    mutationFn: (body: Parameters<typeof saveVelocityModel>[1]) => saveVelocityModel(network, body),
    onSuccess: (m) => {
      qc.setQueryData(velocityModelQuery(network).queryKey, m);
      setLayers(toDraft(m));
      setName(m.name);
      void qc.invalidateQueries({ queryKey: queryKeys.supervisor.part('review') });
    },
  });
  if (q.isPending || layers === null) return q.error ? <ErrorLine error={q.error} /> : <Loading label="Loading the velocity model…" />;
  const m = q.data;
  if (!m) return <ErrorLine error={q.error} />;
  const set = (i: number, field: keyof LayerDraft, value: string) => setLayers(layers.map((l, k) => (k === i ? { ...l, [field]: value } : l)));
  const submit = () => {
    const parsed = parseLayers(layers);
    if (!parsed.ok) {
      setProblem(parsed.message);
      return;
    }
    setProblem(null);
    save.mutate({ name: name.trim(), layers: parsed.layers, stationCorrections: m.stationCorrections, ...(m.version === null ? {} : { version: m.version }) });
  };
  return (
    <div className="flex flex-col gap-2" data-testid="velocity-model">
      <p className="flex flex-wrap items-center gap-2 text-sm">
        <span>
          Network <strong>{network}</strong>: {m.name}
        </span>
        {m.isDefault ? <Badge tone="warn">default: replace with the network&rsquo;s own model</Badge> : <Badge tone="ok">the network&rsquo;s own model{m.updatedAt ? `, saved ${m.updatedAt.slice(0, 16).replace('T', ' ')} UTC` : ''}</Badge>}
      </p>
      <p className="text-sm text-ink-muted">
        {m.note} Events located after saving use the new model; an event already located keeps its origin until it is relocated on its screen. ML uses the {m.minusLogA0} −log A0 law{Object.keys(m.stationCorrections).length > 0 ? ` with ${Object.keys(m.stationCorrections).length} station corrections` : ''}.
      </p>
      <form className="flex flex-col gap-2" aria-label={`Velocity model of network ${network}`} onSubmit={(e) => { e.preventDefault(); submit(); }}>
        <label className="flex w-80 flex-col text-sm">
          Model name
          <Input value={name} onChange={(e) => setName(e.target.value)} />
        </label>
        <div className="max-w-2xl">
        <Table caption={`Layers of the ${network} model, from the surface down (the last is a half-space)`}>
          <THead>
            <tr>
              <Th>Layer</Th>
              <Th>Top (km, down)</Th>
              <Th>Vp (km/s)</Th>
              <Th>Vs (km/s)</Th>
              <Th>
                <span className="sr-only">Remove</span>
              </Th>
            </tr>
          </THead>
          <TBody>
            {layers.map((l, i) => (
              <Tr key={i}>
                <Td className="text-sm">{i === layers.length - 1 ? `${i + 1} (half-space)` : i + 1}</Td>
                <Td>
                  <Input aria-label={`Layer ${i + 1} top depth (km)`} inputMode="decimal" className="w-24" value={l.topKm} onChange={(e) => set(i, 'topKm', e.target.value)} />
                </Td>
                <Td>
                  <Input aria-label={`Layer ${i + 1} Vp (km/s)`} inputMode="decimal" className="w-24" value={l.vpKmS} onChange={(e) => set(i, 'vpKmS', e.target.value)} />
                </Td>
                <Td>
                  <Input aria-label={`Layer ${i + 1} Vs (km/s)`} inputMode="decimal" className="w-24" value={l.vsKmS} onChange={(e) => set(i, 'vsKmS', e.target.value)} />
                </Td>
                <Td>
                  <Button size="sm" variant="quiet" disabled={layers.length === 1} onClick={() => setLayers(layers.filter((_, k) => k !== i))}>
                    Remove layer {i + 1}
                  </Button>
                </Td>
              </Tr>
            ))}
          </TBody>
        </Table>
        </div>
        <div className="flex flex-wrap gap-2">
          <Button size="sm" onClick={() => setLayers([...layers, { topKm: '', vpKmS: '', vsKmS: '' }])}>
            Add a layer
          </Button>
          <Button size="sm" variant="primary" type="submit" disabled={save.isPending}>
            Save the {network} model
          </Button>
          <Button size="sm" variant="quiet" onClick={() => setLayers(toDraft(m))}>
            Undo changes
          </Button>
        </div>
        {problem ? (
          <p role="alert" className="text-sm text-danger">
            {problem}
          </p>
        ) : null}
        <ErrorLine error={save.error} />
        {save.isSuccess && !save.isPending ? (
          <p role="status" className="text-sm text-ok">
            Saved as version {save.data.version}.
          </p>
        ) : null}
      </form>
    </div>
  );
}
