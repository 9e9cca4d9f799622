import { useId, useState } from 'react';
import { Badge } from '@client/components/ui/badge';
import { Button } from '@client/components/ui/button';
import { FormField } from '@client/components/ui/form-field';
import { Input } from '@client/components/ui/input';
import { ScrollTable, Td, Th, ThActions, Tr } from '@client/components/ui/table';
import { tokenCreateSchema, type TokenCreated } from '@shared/schemas/station';
import { useCreateToken, useRevokeToken, useStationTokens } from '@client/features/stations/api/stations';
import { ApiError } from '@client/lib/api-client';

/**
 * A station's ingest tokens: create one (the secret is shown once, with a copy button and a curl
 * line), list them with their last use, revoke them. People who may not manage tokens see why.
 */
export function TokensPanel({ stationId, stationKey }: { stationId: number; stationKey: string }) {
  const tokens = useStationTokens(stationId, true);
  const create = useCreateToken(stationId);
  const revoke = useRevokeToken(stationId);
  const [label, setLabel] = useState('');
  const [labelError, setLabelError] = useState<string | undefined>();
  const [fresh, setFresh] = useState<TokenCreated | null>(null);
  const [copied, setCopied] = useState(false);
  const secretId = useId();

  if (tokens.error instanceof ApiError && tokens.error.status === 403) {
    return <p className="text-sm text-ink-muted">Only this station’s operators and admins manage its ingest tokens.</p>;
  }

  const submit = async () => {
    const parsed = tokenCreateSchema.safeParse({ label });
    if (!parsed.success) {
      setLabelError(parsed.error.issues[0]?.message);
      return;
    }
    setLabelError(undefined);
    try {
      setFresh(await create.mutateAsync(parsed.data.label));
      setCopied(false);
      setLabel('');
    } catch (err) {
      setLabelError(err instanceof Error ? err.message : String(err));
    }
  };

  const curl = fresh ? `curl -H "Authorization: Bearer ${fresh.secret}" -F "files=@${stationKey}.mseed" ${window.location.origin}/api/uploads` : '';

  return (
    <div className="flex flex-col gap-3">
      <form
        className="flex flex-wrap items-end gap-2"
        onSubmit={(e) => {
          e.preventDefault();
          void submit();
        }}
      >
        <FormField label="New token: what is it for?" hint="e.g. the acquisition computer in the vault" error={labelError} className="min-w-64">
          {(p) => <Input {...p} value={label} onChange={(e) => setLabel(e.target.value)} placeholder="acquisition PC in the vault" />}
        </FormField>
        <Button type="submit" variant="primary" disabled={create.isPending}>
          Create token
        </Button>
      </form>

      {fresh ? (
        <div role="status" className="flex flex-col gap-2 rounded-sm border border-line border-l-4 border-l-accent bg-surface px-3 py-2">
          <p className="font-semibold">Token “{fresh.token.label}” created. Copy it now: it is shown only this once.</p>
          <div className="flex flex-wrap items-center gap-2">
            <label htmlFor={secretId} className="sr-only">
              Token secret
            </label>
            <Input id={secretId} mono readOnly value={fresh.secret} className="min-w-96 flex-1" onFocus={(e) => e.target.select()} />
            <Button
              onClick={() => {
                void navigator.clipboard?.writeText(fresh.secret).then(() => setCopied(true));
              }}
            >
              {copied ? 'Copied' : 'Copy'}
            </Button>
            <Button variant="quiet" onClick={() => setFresh(null)}>
              I have stored it
            </Button>
          </div>
          <p className="text-sm text-ink-muted">From a script:</p>
          <pre className="overflow-x-auto rounded-sm bg-sunken px-2 py-1 font-mono text-sm">{curl}</pre>
        </div>
      ) : null}

      {tokens.data && tokens.data.tokens.length > 0 ? (
        <ScrollTable
          label="Ingest tokens" caption="Ingest tokens of this station" captionHidden
          head={
            <Tr>
              <Th>Label</Th>
              <Th>Created (UTC)</Th>
              <Th>Last used (UTC)</Th>
              <Th>State</Th>
              <ThActions />
            </Tr>
          }
        >
          {tokens.data.tokens.map((t) => (
            <Tr key={t.id}>
              <Td>{t.label}</Td>
              <Td className="font-mono text-sm">
                {t.createdAt}
                {t.createdBy ? <span className="block font-sans text-ink-muted">by {t.createdBy}</span> : null}
              </Td>
              <Td className="font-mono text-sm">{t.lastUsedAt ?? 'never'}</Td>
              <Td>{t.revokedAt ? <Badge tone="neutral">revoked {t.revokedAt.slice(0, 10)}</Badge> : <Badge tone="ok">active</Badge>}</Td>
              <Td>
                {t.revokedAt ? null : (
                  <Button size="sm" variant="danger" disabled={revoke.isPending} onClick={() => revoke.mutate(t.id)} aria-label={`Revoke token ${t.label}`}>
                    Revoke
                  </Button>
                )}
              </Td>
            </Tr>
          ))}
        </ScrollTable>
      ) : tokens.data ? (
        <p className="text-sm text-ink-muted">No tokens yet. Scripts on the acquisition computer need one to upload for this station.</p>
      ) : null}
    </div>
  );
}
