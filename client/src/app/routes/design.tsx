import { zodResolver } from '@hookform/resolvers/zod';
import { useEffect, useMemo, useRef, useState, type ReactNode } from 'react';
import { useForm } from 'react-hook-form';
import { z } from 'zod';
import { roles, roleLabels } from '@shared/auth/roles';
import { flags } from '@shared/schemas/flags';
import { SideNav, TopBar } from '@client/components/layouts/app-shell';
import { Badge } from '@client/components/ui/badge';
import { Button } from '@client/components/ui/button';
import { Checkbox } from '@client/components/ui/checkbox';
import { ConnectionIndicator } from '@client/components/ui/connection-indicator';
import { Dialog } from '@client/components/ui/dialog';
import { EmptyState } from '@client/components/ui/empty-state';
import { FlagMarker, flagLooks } from '@client/components/ui/flag-marker';
import { FormField } from '@client/components/ui/form-field';
import { CheckIcon } from '@client/components/ui/icons';
import { Input } from '@client/components/ui/input';
import { Kbd } from '@client/components/ui/kbd';
import { formatPlotNumber, PlotFrame, type PlotSeries } from '@client/components/ui/plot-frame';
import { Select } from '@client/components/ui/select';
import { Loading } from '@client/components/ui/skeleton';
import { StateMarker, stateLooks } from '@client/components/ui/state-marker';
import { Table, TableScroll, TBody, Td, Th, THead, Tr } from '@client/components/ui/table';
import { Tabs } from '@client/components/ui/tabs';
import { useToast } from '@client/components/ui/toast';
import { TriageCaution } from '@client/components/ui/triage-caution';
import { itemStates } from '@shared/schemas/item-states';
import { navFor, navItems } from '@client/config/paths';
import { SessionProvider, type SessionUser } from '@client/lib/session-context';
import type { Theme } from '@client/lib/theme';
import { cx } from '@client/lib/cx';

/** Sample people for the previews: the demo users of the invented Kestrel Valley network. */
const previewUser: SessionUser = {
  email: 'supervisor@kestrel.example',
  displayName: 'Demo supervisor',
  roles: ['supervisor', 'analyst'],
};

/** Rows for the table preview: invented Kestrel Valley windows, for display only. */
const sampleRows = [
  { id: 1, stream: 'XX.KV03.00.HHZ', start: '2026-03-14T09:26:53.589Z', ratio: 14.2, staLta: 6.3, flag: 'likely event', state: 'new' },
  { id: 2, stream: 'XX.KV04.00.HHZ', start: '2026-03-14T09:27:10.004Z', ratio: 0.41, staLta: 1.9, flag: 'likely noise', state: 'dismissed' },
  { id: 3, stream: 'XX.KV01.00.HHZ', start: '2026-03-14T11:58:02.250Z', ratio: 3.07, staLta: 3.8, flag: 'needs eyes', state: 'in review' },
  { id: 4, stream: 'XX.KV06.00.HHZ', start: '2026-03-14T12:01:44.917Z', ratio: 9.85, staLta: 5.1, flag: 'likely event', state: 'escalated' },
  { id: 5, stream: 'XX.KV02.00.HHZ', start: '2026-03-14T12:02:00.120Z', ratio: 8.6, staLta: 4.4, flag: 'likely event', state: 'labelled' },
] as const;

const eventTypes = ['earthquake', 'quarry blast', 'explosion', 'induced or triggered event', 'other event', 'not existing'] as const;

const demoFormSchema = z.object({
  station: z
    .string()
    .trim()
    .regex(/^[A-Z0-9]{1,5}$/, 'Station code: 1 to 5 capital letters or digits, e.g. KV03'),
  email: z.email('Enter an e-mail address such as analyst@kestrel.example'),
  eventType: z.enum(eventTypes, { message: 'Choose an event type' }),
  notify: z.boolean(),
});

type DemoForm = z.infer<typeof demoFormSchema>;

/** Synthetic sines for the plot preview (display only, not data). 0–20 s at 50 samples/s. */
function useDemoSignals() {
  return useMemo(() => {
    const n = 1000;
    const t = new Float64Array(n);
    const z1 = new Float64Array(n);
    const n1 = new Float64Array(n);
    const e1 = new Float64Array(n);
    for (let i = 0; i < n; i += 1) {
      const s = i / 50;
      t[i] = s;
      const burst = Math.exp(-(((s - 8) / 2.2) ** 2));
      z1[i] = 120 * Math.sin(2 * Math.PI * 1.1 * s) * burst + 18 * Math.sin(2 * Math.PI * 0.23 * s);
      n1[i] = 80 * Math.sin(2 * Math.PI * 1.4 * s + 0.7) * burst + 14 * Math.sin(2 * Math.PI * 0.21 * s + 1);
      e1[i] = 60 * Math.sin(2 * Math.PI * 0.9 * s + 1.9) * burst - 10 * Math.sin(2 * Math.PI * 0.26 * s);
    }
    const series: PlotSeries[] = [
      { label: 'HHZ', values: z1 },
      { label: 'HHN', values: n1 },
      { label: 'HHE', values: e1 },
    ];
    return { t, series };
  }, []);
}

const swatchTokens = [
  'canvas',
  'surface',
  'raised',
  'sunken',
  'line',
  'line-strong',
  'ink',
  'ink-muted',
  'accent',
  'accent-ink',
  'focus',
  'danger',
  'warn',
  'ok',
  'info',
] as const;

function Swatches() {
  const ref = useRef<HTMLUListElement>(null);
  const [hex, setHex] = useState<Record<string, string>>({});
  useEffect(() => {
    if (!ref.current) return;
    const style = getComputedStyle(ref.current);
    setHex(Object.fromEntries(swatchTokens.map((t) => [t, style.getPropertyValue(`--sf-${t}`).trim()])));
  }, []);
  return (
    <ul ref={ref} className="grid grid-cols-[repeat(auto-fill,minmax(7.5rem,1fr))] gap-1.5">
      {swatchTokens.map((t) => (
        <li key={t} className="flex items-center gap-2">
          <span className="size-5 shrink-0 rounded-xs border border-line-strong" style={{ background: `var(--sf-${t})` }} aria-hidden="true" />
          <span className="min-w-0 leading-tight">
            <span className="block truncate text-sm">{t}</span>
            <code className="block text-xs text-ink-muted">{hex[t] ?? ''}</code>
          </span>
        </li>
      ))}
    </ul>
  );
}

function DemoFormPreview() {
  const { notify } = useToast();
  const {
    register,
    handleSubmit,
    formState: { errors },
  } = useForm<DemoForm>({
    resolver: zodResolver(demoFormSchema),
    defaultValues: { station: 'kv3', email: '', eventType: undefined, notify: true },
  });
  return (
    <form
      noValidate
      onSubmit={handleSubmit((values) => notify({ tone: 'ok', title: 'Form is valid', body: `${values.station}, ${values.eventType}` }))}
      className="grid grid-cols-2 gap-3"
    >
      <FormField label="Station code" hint="As in the stream id, e.g. KV03" error={errors.station?.message}>
        {(p) => <Input {...p} mono autoComplete="off" {...register('station')} />}
      </FormField>
      <FormField label="Reply to" error={errors.email?.message}>
        {(p) => <Input {...p} type="email" placeholder="name@kestrel.example" {...register('email')} />}
      </FormField>
      <FormField label="Event type" hint="QuakeML 1.2 event type" error={errors.eventType?.message}>
        {(p) => (
          <Select {...p} defaultValue="" {...register('eventType')}>
            <option value="" disabled>
              Choose…
            </option>
            {eventTypes.map((t) => (
              <option key={t} value={t}>
                {t}
              </option>
            ))}
          </Select>
        )}
      </FormField>
      <FormField label="Pick time (UTC)" optional>
        {(p) => <Input {...p} mono disabled value="2026-03-14T09:26:55.120Z" readOnly />}
      </FormField>
      <Checkbox className="col-span-2" label="Tell the supervisors" hint="Sends an e-mail and an inbox entry." {...register('notify')} />
      <div className="col-span-2 flex gap-2">
        <Button type="submit" variant="primary">
          Check form
        </Button>
        <span className="self-center text-sm text-ink-muted">Submit once to see the error texts.</span>
      </div>
    </form>
  );
}

function TypePreview() {
  return (
    <div className="flex flex-col gap-1">
      <p className="text-xl font-semibold">Queue · 42 waiting</p>
      <p className="text-md">Dense prose at 14 px in IBM Plex Sans; labels at 13 px; nothing under 12 px.</p>
      <p className="text-sm text-ink-muted">Secondary text, e.g. “claimed 3 min ago by the duty analyst”.</p>
      <p className="flex flex-wrap gap-x-4 text-sm">
        <code>XX.KV03.00.HHZ</code>
        <time dateTime="2026-03-14T09:26:53.589Z">2026-03-14T09:26:53.589Z</time>
        <span className="figure">14.20 · 1.152 · 0.5–2 Hz</span>
      </p>
    </div>
  );
}

const spacingSteps = [1, 2, 3, 4, 6, 8] as const;
const radii = [
  ['xs', 'rounded-xs', '2 px'],
  ['sm', 'rounded-sm', '3 px'],
  ['md', 'rounded-md', '5 px'],
  ['lg', 'rounded-lg', '8 px'],
  ['full', 'rounded-full', 'pills'],
] as const;

function SpacingPreview() {
  return (
    <div className="flex flex-col gap-3">
      <ul className="flex flex-wrap items-end gap-3" aria-label="Spacing steps">
        {spacingSteps.map((step) => (
          <li key={step} className="flex flex-col items-center gap-1">
            <span aria-hidden="true" className="block bg-accent" style={{ width: `calc(var(--spacing) * ${step})`, height: `calc(var(--spacing) * ${step})` }} />
            <code className="text-xs text-ink-muted">
              {step} · {step * 4} px
            </code>
          </li>
        ))}
      </ul>
      <ul className="flex flex-wrap gap-3" aria-label="Radii">
        {radii.map(([name, cls, size]) => (
          <li key={name} className="flex flex-col items-center gap-1">
            <span aria-hidden="true" className={cx('block h-7 w-12 border-[1.5px] border-line-strong bg-raised', cls)} />
            <code className="text-xs text-ink-muted">
              {name} · {size}
            </code>
          </li>
        ))}
      </ul>
    </div>
  );
}

function MarkersPreview() {
  return (
    <div className="flex flex-col gap-2">
      <div className="flex flex-wrap items-center gap-2">
        {flags.map((f) => (
          <FlagMarker key={f} flag={f} />
        ))}
      </div>
      <div className="flex flex-wrap items-center gap-2">
        {flags.map((f) => (
          <FlagMarker key={f} flag={f} size="md" />
        ))}
      </div>
      <ul className="text-sm text-ink-muted">
        {flags.map((f) => (
          <li key={f}>
            <span className="text-ink">{f}</span>: {flagLooks[f].shape}. {flagLooks[f].description}
          </li>
        ))}
      </ul>
      <div className="flex flex-wrap items-center gap-1.5">
        {itemStates.map((s) => (
          <StateMarker key={s} state={s} />
        ))}
      </div>
      <p className="text-sm text-ink-muted">
        Item states are square tags with a glyph: {itemStates.map((s) => `${s}: ${stateLooks[s].glyph}`).join('; ')}.
      </p>
      <TriageCaution />
    </div>
  );
}

function ButtonsPreview() {
  return (
    <div className="flex flex-col gap-2">
      <div className="flex flex-wrap items-center gap-2">
        <Button variant="primary" shortcut="L">
          Label
        </Button>
        <Button shortcut="D">Dismiss</Button>
        <Button variant="danger" shortcut="E">
          Escalate
        </Button>
        <Button variant="quiet">Skip</Button>
        <Button disabled>Claimed by someone else</Button>
      </div>
      <div className="flex flex-wrap items-center gap-2">
        <Button size="sm" variant="primary">
          Small primary
        </Button>
        <Button size="sm">Small</Button>
        <span className="text-sm text-ink-muted">
          Next <Kbd>J</Kbd> · previous <Kbd>K</Kbd> · all keys <Kbd>?</Kbd>
        </span>
      </div>
    </div>
  );
}

function BadgesPreview() {
  return (
    <div className="flex flex-col gap-2">
      <div className="flex flex-wrap items-center gap-1.5">
        <Badge>neutral</Badge>
        <Badge tone="accent">supervisor</Badge>
        <Badge tone="info">3 channels</Badge>
        <Badge tone="ok">baseline ready</Badge>
        <Badge tone="warn">gap 1.2 s</Badge>
        <Badge tone="danger">clipped</Badge>
        <Badge mono>XX.KV04</Badge>
      </div>
      <div className="flex flex-wrap gap-4">
        <ConnectionIndicator state="live" />
        <ConnectionIndicator state="connecting" />
        <ConnectionIndicator state="offline" />
      </div>
    </div>
  );
}

function TablePreview() {
  const [selectedRow, setSelectedRow] = useState(1);
  return (
    <div className="flex flex-col gap-2">
      <TriageCaution variant="line" />
      <TableScroll label="Sample windows">
        <Table caption="Sample windows (invented, display only)" captionHidden>
          <THead>
            <Tr>
              <Th>Stream</Th>
              <Th>Start (UTC)</Th>
              <Th figure>High/low ratio</Th>
              <Th figure>STA/LTA peak</Th>
              <Th>Flag</Th>
              <Th>State</Th>
            </Tr>
          </THead>
          <TBody>
            {sampleRows.map((row) => (
              <Tr key={row.id} selected={row.id === selectedRow} onClick={() => setSelectedRow(row.id)}>
                <Td className="font-mono text-sm whitespace-nowrap">{row.stream}</Td>
                <Td className="text-sm whitespace-nowrap">
                  <time dateTime={row.start}>{row.start}</time>
                </Td>
                <Td figure>{row.ratio.toFixed(2)}</Td>
                <Td figure>{row.staLta.toFixed(1)}</Td>
                <Td>
                  <FlagMarker flag={row.flag} />
                </Td>
                <Td>
                  <StateMarker state={row.state} />
                </Td>
              </Tr>
            ))}
          </TBody>
        </Table>
      </TableScroll>
    </div>
  );
}

function PlotPreview() {
  const demo = useDemoSignals();
  return (
    <PlotFrame
      title="XX.KV03.00 · synthetic sines (display only)"
      description="Three synthetic sine bursts, one per component, peaking near 8 seconds. For showing the plot style only."
      x={{ label: 'time', unit: 's', values: demo.t, format: (v) => v.toFixed(1) }}
      y={{ label: 'amplitude', unit: 'counts', format: (v) => formatPlotNumber(Math.round(v)) }}
      series={demo.series}
      height={200}
    />
  );
}

function TabsPreview({ theme }: { theme: Theme }) {
  return (
    <Tabs
      label={`Trace views (${theme} preview)`}
      tabs={[
        { id: 'raw', label: 'Raw', content: <p className="text-sm">Demeaned, detrended, tapered trace.</p> },
        { id: 'low', label: 'Low band', content: <p className="text-sm">Butterworth band-pass 0.5–2 Hz, order 4, causal.</p> },
        { id: 'high', label: 'High band', content: <p className="text-sm">Butterworth band-pass 2–10 Hz, order 4, causal.</p> },
      ]}
    />
  );
}

function OverlaysPreview() {
  const [dialogOpen, setDialogOpen] = useState(false);
  const { notify } = useToast();
  return (
    <div className="flex flex-wrap gap-2">
      <Button onClick={() => setDialogOpen(true)}>Open dialog</Button>
      <Button onClick={() => notify({ tone: 'ok', title: 'Labelled as quarry blast', body: 'XX.KV03.00.HHZ 2026-03-14T11:58:02.250Z' })}>Toast: done</Button>
      <Button onClick={() => notify({ tone: 'warn', title: 'Claim lapses in 1 min' })}>Toast: warning</Button>
      <Button onClick={() => notify({ tone: 'danger', title: 'Someone else labelled this item', body: 'Reload it to see their label.' })}>
        Toast: error
      </Button>
      <Dialog
        open={dialogOpen}
        onClose={() => setDialogOpen(false)}
        title="Dismiss as noise?"
        description="XX.KV04.00.HHZ · 2026-03-14T09:27:10.004Z"
        actions={
          <>
            <Button onClick={() => setDialogOpen(false)}>Cancel</Button>
            <Button variant="primary" onClick={() => setDialogOpen(false)}>
              Dismiss
            </Button>
          </>
        }
      >
        <FormField label="Noise reason">
          {(p) => (
            <Select {...p} defaultValue="machinery">
              <option value="traffic">traffic</option>
              <option value="machinery">machinery</option>
              <option value="wind">wind</option>
              <option value="instrument glitch">instrument glitch</option>
              <option value="unknown noise">unknown noise</option>
            </Select>
          )}
        </FormField>
      </Dialog>
    </div>
  );
}

function EmptyPreview({ theme }: { theme: Theme }) {
  return (
    <div className="flex flex-col gap-3">
      <EmptyState title="Queue is clear" action={<Button size="sm">Show dismissed items</Button>}>
        No window waits for review. New uploads appear here as soon as they are scored.
      </EmptyState>
      <Loading label={`Loading the queue (${theme} preview)`} rows={3} />
    </div>
  );
}

function ShellPreview() {
  return (
    <SessionProvider value={{ user: previewUser }}>
      <div className="overflow-hidden rounded-sm border border-line">
        <TopBar user={previewUser} connection="live" />
        <div className="flex">
          <SideNav items={navFor(previewUser.roles, false, true)} className="w-52 shrink-0 border-r border-line bg-surface" />
          <div className="flex-1 bg-canvas p-3 text-sm text-ink-muted">Content area: takes the full width.</div>
        </div>
      </div>
    </SessionProvider>
  );
}

/**
 * One row of the reference: the same content in the dark and the light theme, side by side (or one
 * above the other for wide content such as tables and the shell).
 */
function Pair({ title, wide, render }: { title: string; wide?: boolean; render: (theme: Theme) => ReactNode }) {
  const id = `design-${title.toLowerCase().replace(/[^a-z]+/g, '-')}`;
  return (
    <section aria-labelledby={id} className="flex flex-col gap-2">
      <h2 id={id} className="text-md font-semibold">
        {title}
      </h2>
      <div className={cx('grid gap-3', wide ? 'grid-cols-1' : 'grid-cols-2')}>
        {(['dark', 'light'] as const).map((theme) => (
          <div key={theme} data-theme={theme} className="min-w-0 rounded-md border border-line bg-canvas p-3 text-ink">
            <p className="pb-2 text-xs font-medium tracking-wider text-ink-muted uppercase">{theme === 'dark' ? 'Dark (default)' : 'Light'}</p>
            {render(theme)}
          </div>
        ))}
      </div>
    </section>
  );
}

function RoleTable() {
  return (
    <TableScroll className="max-w-3xl" label="Navigation by role">
      <Table caption="Who sees which section in the navigation (the server checks every request regardless)">
        <THead>
          <Tr>
            <Th>Section</Th>
            {roles.map((r) => (
              <Th key={r} className="text-center">
                <span title={roleLabels[r]}>{r}</span>
              </Th>
            ))}
          </Tr>
        </THead>
        <TBody>
          {navItems.map((item) => (
            <Tr key={item.key}>
              <Th scope="row" className="font-normal text-ink">
                {item.label}
              </Th>
              {roles.map((r) => {
                const yes = navFor([r], false, true).some((n) => n.key === item.key);
                return (
                  <Td key={r} className="text-center">
                    {yes ? (
                      <CheckIcon size={14} className="inline text-ok" title={`${r}: yes`} />
                    ) : (
                      <span className="text-ink-muted">
                        –<span className="sr-only">{`${r}: no`}</span>
                      </span>
                    )}
                  </Td>
                );
              })}
            </Tr>
          ))}
        </TBody>
      </Table>
    </TableScroll>
  );
}

/**
 * /design: the living reference. Every component of the kit in both themes side by side, the
 * tokens, and the navigation per role. Only builds that carry the development pages have it
 * (client/src/config/build-flags.ts); a production build has no such route.
 */
export function DesignRoute() {
  return (
    <div className="flex flex-col gap-6">
      <header>
        <h1 className="text-xl font-semibold">Design reference</h1>
        <p className="max-w-3xl text-base text-ink-muted">
          Every component of the kit in both themes. Screens use these and the tokens in <code>client/src/styles/tokens.css</code>; see{' '}
          <code>docs/design.md</code>. Sample rows and the plot are invented for display.
        </p>
      </header>
      <Pair title="Type" render={() => <TypePreview />} />
      <Pair title="Colour tokens" render={() => <Swatches />} />
      <Pair title="Spacing and radii" render={() => <SpacingPreview />} />
      <Pair title="Flags, item states and the caution" render={() => <MarkersPreview />} />
      <Pair title="Buttons and key hints" render={() => <ButtonsPreview />} />
      <Pair title="Badges and connection state" render={() => <BadgesPreview />} />
      <Pair title="Form fields" render={() => <DemoFormPreview />} />
      <Pair title="Dense table" wide render={() => <TablePreview />} />
      <Pair title="Plot frame" render={() => <PlotPreview />} />
      <Pair title="Tabs" render={(t) => <TabsPreview theme={t} />} />
      <Pair title="Dialog and toasts" render={() => <OverlaysPreview />} />
      <Pair title="Empty and loading" render={(t) => <EmptyPreview theme={t} />} />
      <Pair title="App shell" wide render={() => <ShellPreview />} />
      <section aria-labelledby="design-roles" className="flex flex-col gap-2">
        <h2 id="design-roles" className="text-md font-semibold">
          Navigation by role
        </h2>
        <RoleTable />
      </section>
    </div>
  );
}
