import { isRouteErrorResponse, useRouteError } from 'react-router-dom';
import { paths } from '../../config/paths.js';
import { Callout } from '../../components/ui/callout.js';

/** Last line of defence for render errors: a plain page with a way back. */
export function RouteErrorBoundary() {
  const error = useRouteError();
  const message = isRouteErrorResponse(error)
    ? `${error.status} ${error.statusText}`
    : error instanceof Error
      ? error.message
      : 'Unknown error';
  return (
    <main className="mx-auto max-w-2xl px-6 py-16">
      <title>Error · Counterpoise</title>
      <h1 className="mb-4 text-2xl font-semibold text-ink">Something went wrong on this page</h1>
      <Callout tone="danger" role="alert">
        <p>{message}</p>
      </Callout>
      <p className="mt-6">
        {/* A full reload, not router navigation: the router itself may be what failed. */}
        <a
          href={paths.studies.list.href()}
          className="font-semibold text-spruce underline underline-offset-4"
        >
          Reload Counterpoise
        </a>
      </p>
    </main>
  );
}
