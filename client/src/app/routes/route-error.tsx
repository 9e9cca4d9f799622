import { isRouteErrorResponse, useRouteError } from 'react-router';

/** Shown when a screen throws while rendering or loading: says what failed instead of a blank page. */
export function RouteError() {
  const error = useRouteError();
  const message = isRouteErrorResponse(error)
    ? `${error.status} ${error.statusText}`
    : error instanceof Error
      ? error.message
      : 'Unknown error';
  return (
    <div role="alert" className="m-6 max-w-2xl rounded-sm border border-danger bg-danger-wash px-4 py-3 text-ink">
      <h1 className="text-md font-semibold text-danger">This screen failed to load</h1>
      <p className="font-mono text-sm">{message}</p>
      <p className="pt-2 text-sm">
        Reload the page to try again. <a href="/">Go to the start page</a>.
      </p>
    </div>
  );
}
