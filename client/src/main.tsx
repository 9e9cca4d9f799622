import '@fontsource/ibm-plex-sans/latin-400.css';
import '@fontsource/ibm-plex-sans/latin-500.css';
import '@fontsource/ibm-plex-sans/latin-600.css';
import '@fontsource/ibm-plex-sans/latin-400-italic.css';
import '@fontsource/ibm-plex-mono/latin-400.css';
import '@fontsource/ibm-plex-mono/latin-500.css';
import './index.css';
import { StrictMode } from 'react';
import { createRoot } from 'react-dom/client';
import { RouterProvider } from 'react-router';
import { AppProvider, createQueryClient } from './app/provider';
import { preloadRouteData } from './app/preload-route';
import { createAppRouter } from './app/router';

const container = document.getElementById('root');
if (!container) throw new Error('client/index.html has no #root element');

// The first screen's requests start now, beside its code (app/preload-route.ts).
const queryClient = createQueryClient();
preloadRouteData(queryClient, window.location);
const router = createAppRouter();

createRoot(container).render(
  <StrictMode>
    <AppProvider queryClient={queryClient}>
      <RouterProvider router={router} />
    </AppProvider>
  </StrictMode>,
);
