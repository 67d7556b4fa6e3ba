import { NotFoundState } from '../../components/ui/states.js';

export function NotFoundRoute() {
  return (
    <>
      <title>Not found · Counterpoise</title>
      <NotFoundState title="Page not found" />
    </>
  );
}
