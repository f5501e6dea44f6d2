// Offline use once loaded: on install, cache every file of this build (site-files.json, written
// by `cargo xtask site`); on fetch, try the network first and fall back to the cache, so an
// online page is always current and an offline one still opens. Same-origin GET requests only.
const PREFIX = "finwake-site-";

self.addEventListener("install", (event) => {
  event.waitUntil((async () => {
    const r = await fetch("site-files.json", { cache: "no-store" });
    const manifest = await r.json();
    const cache = await caches.open(PREFIX + manifest.version);
    await cache.addAll(["./", ...manifest.files]);
    await self.skipWaiting();
  })());
});

self.addEventListener("activate", (event) => {
  event.waitUntil((async () => {
    const r = await fetch("site-files.json", { cache: "no-store" }).catch(() => null);
    const current = r && r.ok ? PREFIX + (await r.json()).version : null;
    if (current) {
      for (const name of await caches.keys()) if (name.startsWith(PREFIX) && name !== current) await caches.delete(name);
    }
    await self.clients.claim();
  })());
});

self.addEventListener("fetch", (event) => {
  const req = event.request;
  if (req.method !== "GET" || new URL(req.url).origin !== self.location.origin) return;
  event.respondWith((async () => {
    try {
      return await fetch(req);
    } catch (err) {
      const hit = await caches.match(req, { ignoreSearch: true });
      if (hit) return hit;
      throw err;
    }
  })());
});
