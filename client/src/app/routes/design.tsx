import type { ReactNode } from 'react';
import { BadgesPreview, ButtonsPreview, DemoFormPreview, MarkersPreview } from '@client/app/design-reference/controls';
import { PlotPreview, TablePreview, TabsPreview } from '@client/app/design-reference/data-views';
import { SpacingPreview, Swatches, TypePreview } from '@client/app/design-reference/foundations';
import { EmptyPreview, OverlaysPreview, RoleTable, ShellPreview } from '@client/app/design-reference/overlays-and-shell';
import { cx } from '@client/lib/cx';
import type { Theme } from '@client/lib/theme';

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
