/** Class list shared by text inputs and selects: one height, border and invalid look. */
export const controlClass =
  'h-8 w-full rounded-sm border border-line-strong bg-sunken px-2.5 text-base text-ink ' +
  'placeholder:text-ink-muted disabled:cursor-not-allowed disabled:opacity-55 ' +
  'aria-[invalid=true]:border-danger aria-[invalid=true]:border-2';
