// Asks the browser now and then whether a newer build of the site is being served.
//
// Browsers look for a new service worker (sw.js) only when a page is opened or reloaded, so a
// page left open would never hear of a newer build. This module asks the registration to check
// while the page is visible: every CHECK_EVERY_MS, when the page becomes visible again, and when
// the device comes back online. A newer sw.js then installs in the background and waits (see
// build_scripts/sw.template.js); the page's notice (share-view.js watchForUpdates) offers the
// reload. The check is one small request for sw.js; offline it fails quietly.

export const CHECK_EVERY_MS = 60_000;

/**
 * Start the checks once a service worker is active for this page.
 *
 * @param {Window} win  the page's window (navigator.serviceWorker, document, timers)
 * @param {number} [everyMs]  interval between checks while the page is visible [ms]
 */
export function checkForUpdates(win, everyMs = CHECK_EVERY_MS) {
  const container = win.navigator.serviceWorker;
  if (!container || !win.isSecureContext) return;
  container.ready.then((registration) => {
    const check = () => {
      if (win.document.visibilityState === "visible") registration.update().catch(() => {});
    };
    win.setInterval(check, everyMs);
    win.document.addEventListener("visibilitychange", check);
    win.addEventListener("online", check);
  });
}
