import { RouterProvider } from 'react-router-dom';
import { AppProvider } from './provider.js';
import { router } from './router.js';

export function App() {
  return (
    <AppProvider>
      <RouterProvider router={router} />
    </AppProvider>
  );
}
