/**
 * The page's only entry module (index.html): small, so that it runs as soon as the page is parsed.
 * It starts the requests and the code of the screen the page opened on (app/early-requests.ts says
 * which; lib/early-requests.ts keeps the answers until the app's own requests take them), then loads
 * the app itself (main.tsx), whose libraries take the longest to load and evaluate. By the time the
 * app runs, its first answers and its first screen's code are in.
 */
import '@fontsource/ibm-plex-sans/latin-400.css';
import '@fontsource/ibm-plex-sans/latin-500.css';
import '@fontsource/ibm-plex-sans/latin-600.css';
import '@fontsource/ibm-plex-sans/latin-400-italic.css';
import '@fontsource/ibm-plex-mono/latin-400.css';
import '@fontsource/ibm-plex-mono/latin-500.css';
import './index.css';
import { earlyRequestsFor, loadEarlyScreen } from './app/early-requests';
import { startEarlyRequests } from './lib/early-requests';

const early = earlyRequestsFor(window.location);
startEarlyRequests(early.urls);
void early.later?.then((urls) => startEarlyRequests(urls), () => undefined);
void loadEarlyScreen(early.screen);
void import('./main');
