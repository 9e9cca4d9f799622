import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { z } from 'zod';
import { flags } from '@shared/schemas/flags';
import { itemStates } from '@shared/schemas/item-states';
import { Badge } from '@client/components/ui/badge';
import { Button } from '@client/components/ui/button';
import { Checkbox } from '@client/components/ui/checkbox';
import { ConnectionIndicator } from '@client/components/ui/connection-indicator';
import { FlagMarker, flagLooks } from '@client/components/ui/flag-marker';
import { FormField } from '@client/components/ui/form-field';
import { Input } from '@client/components/ui/input';
import { Kbd } from '@client/components/ui/kbd';
import { Select } from '@client/components/ui/select';
import { StateMarker, stateLooks } from '@client/components/ui/state-marker';
import { useToast } from '@client/components/ui/toast';
import { TriageCaution } from '@client/components/ui/triage-caution';

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

/** A form with the zod messages shown on a first submit. */
export function DemoFormPreview() {
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

/** Flag markers at both sizes with their shapes, the item-state tags and the triage caution. */
export function MarkersPreview() {
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

/** Button variants and sizes with their key hints. */
export function ButtonsPreview() {
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

/** Badge tones and the live-connection states. */
export function BadgesPreview() {
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
