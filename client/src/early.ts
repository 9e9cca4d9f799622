/**
 * The page's first module (index.html), run before the app's libraries are evaluated: it starts the
 * requests and the code of the screen the page opened on, so that both have arrived by the time the
 * app has loaded and runs (app/early-requests.ts says which; lib/early-requests.ts keeps the answers
 * until the app's own requests take them).
 */
import { earlyRequestsFor, loadEarlyScreen } from './app/early-requests';
import { startEarlyRequests } from './lib/early-requests';

const early = earlyRequestsFor(window.location);
startEarlyRequests(early.urls);
void loadEarlyScreen(early.screen);
