// The kiosk's service worker: on install it stores every file of the kiosk folder (listed by
// `timeweave kiosk` in kiosk-files.js, with a cache name that changes with the timetable), and
// from then on answers every request from that store, so the screen works with no network.
// Requests for anything not in the list go to the network as usual.
importScripts('kiosk-files.js');

self.addEventListener('install', (event) => {
  event.waitUntil(
    caches.open(self.KIOSK_CACHE)
      .then((cache) => cache.addAll(self.KIOSK_FILES.map((f) => new Request(f, { cache: 'reload' }))))
      .then(() => self.skipWaiting()),
  );
});

self.addEventListener('activate', (event) => {
  event.waitUntil(
    caches.keys()
      .then((keys) => Promise.all(keys.filter((k) => k.startsWith('timeweave-kiosk-') && k !== self.KIOSK_CACHE).map((k) => caches.delete(k))))
      .then(() => self.clients.claim()),
  );
});

self.addEventListener('fetch', (event) => {
  if (event.request.method !== 'GET') return;
  event.respondWith(
    caches.open(self.KIOSK_CACHE)
      .then((cache) => cache.match(event.request, { ignoreSearch: true }))
      .then((hit) => hit || fetch(event.request)),
  );
});
