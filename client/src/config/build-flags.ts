/**
 * Whether this build carries the pages meant for people building Seisift, not for a network's
 * staff (the design reference at /design): development builds (`npm run dev`), and the client
 * build the test run makes (`VITE_SEISIFT_DEV_PAGES=1`, set by `npm test` so the browser tests
 * can check every component). A production build (`npm start`) has neither the page nor its
 * navigation entry.
 */
export const devPagesIncluded: boolean = import.meta.env.DEV || import.meta.env.VITE_SEISIFT_DEV_PAGES === '1';
