// Loaded by early.ts (the page's entry, which also brings the styles and fonts).
import { StrictMode } from 'react';
import { createRoot } from 'react-dom/client';
import { RouterProvider } from 'react-router';
import { AppProvider, createQueryClient } from './app/provider';
import { loadEarlyScreen, screenAt } from './app/early-requests';
import { preloadRouteData } from './app/preload-route';
import { createAppRouter } from './app/router';

const container = document.getElementById('root');
if (!container) throw new Error('client/index.html has no #root element');

// The first screen is drawn once its code and first answers are in (most were asked for before this
// module ran: early.ts), so it appears in one go instead of once per answer; never later than
// FIRST_DRAW_WAIT_MS after this point, whatever the server does.
const FIRST_DRAW_WAIT_MS = 600;
const queryClient = createQueryClient();
const router = createAppRouter();
const firstScreen = Promise.all([preloadRouteData(queryClient, window.location), loadEarlyScreen(screenAt(window.location.pathname)?.screen ?? null)]);
const drawn = Promise.race([firstScreen, new Promise((r) => setTimeout(r, FIRST_DRAW_WAIT_MS))]);
// Drawn whatever happened to those requests (each screen shows its own errors).
void drawn.catch(() => undefined).then(() =>
  createRoot(container).render(
    <StrictMode>
      <AppProvider queryClient={queryClient}>
        <RouterProvider router={router} />
      </AppProvider>
    </StrictMode>,
  ),
);
