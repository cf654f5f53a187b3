// Flarebook's offline worker, served at /sw.js so that its scope covers the sortie sheets.
// It keeps the sheet's static files and the sheets opened on this tablet in the Cache API, serves them
// when there is no signal, and sends the outbox (static/outbox.js) when Background Sync says the
// signal is back. Nothing here reaches another host.
importScripts("/static/outbox.js");

var STATIC_CACHE = "flarebook-static-3";
var SHEET_CACHE = "flarebook-sheets";
var STATIC_FILES = ["/static/app.css", "/static/app.js", "/static/outbox.js", "/static/vendor/htmx-2.0.11.min.js"];
var SHEET_PATH = /^\/sorties\/\d+$/;

self.addEventListener("install", function (event) {
  event.waitUntil(caches.open(STATIC_CACHE).then(function (cache) { return cache.addAll(STATIC_FILES); })
    .then(function () { return self.skipWaiting(); }));
});

self.addEventListener("activate", function (event) {
  event.waitUntil(caches.keys().then(function (names) {
    return Promise.all(names.filter(function (name) { return name.indexOf("flarebook-static-") === 0 && name !== STATIC_CACHE; })
      .map(function (name) { return caches.delete(name); }));
  }).then(function () { return self.clients.claim(); }));
});

function offlinePage() {
  var html = "<!doctype html><html lang=\"en\"><head><meta charset=\"utf-8\"><title>No signal · Flarebook</title>" +
    "<link rel=\"stylesheet\" href=\"/static/app.css\"></head><body><main id=\"main\"><h1>No signal</h1>" +
    "<p class=\"notice\">This page was not kept on this tablet. Sortie sheets you opened with signal open without it; " +
    "everything else needs the connection back.</p><p><a href=\"/sorties\">Sorties</a></p></main></body></html>";
  return new Response(html, { status: 503, headers: { "Content-Type": "text/html; charset=utf-8" } });
}

self.addEventListener("fetch", function (event) {
  var request = event.request;
  if (request.method !== "GET") return;  // posts go to the network; the page queues what fails
  var url = new URL(request.url);
  if (url.origin !== self.location.origin) return;
  if (url.pathname.indexOf("/static/") === 0) {
    // Static files: the kept copy at once, refreshed in the background for next time.
    event.respondWith(caches.open(STATIC_CACHE).then(function (cache) {
      return cache.match(request).then(function (kept) {
        var fresh = fetch(request).then(function (response) {
          if (response.ok) cache.put(request, response.clone());
          return response;
        });
        if (kept) { fresh.catch(function () {}); return kept; }
        return fresh;
      });
    }));
    return;
  }
  if (request.mode === "navigate") {
    // Pages: the network first; a sortie sheet that answered is kept, and served when there is no signal.
    event.respondWith(fetch(request).then(function (response) {
      if (response.ok && !response.redirected && SHEET_PATH.test(url.pathname)) {
        var copy = response.clone();
        caches.open(SHEET_CACHE).then(function (cache) { return cache.put(url.pathname, copy); });
      }
      return response;
    }, function () {
      return caches.open(SHEET_CACHE).then(function (cache) { return cache.match(url.pathname, { ignoreVary: true }); })
        .then(function (kept) { return kept || offlinePage(); });
    }));
  }
});

self.addEventListener("sync", function (event) {
  if (event.tag !== self.FlarebookOutbox.SYNC_TAG) return;
  event.waitUntil(self.FlarebookOutbox.replayAll(null).then(function (sent) {
    if (!sent.length) return null;
    return self.clients.matchAll({ type: "window" }).then(function (windows) {
      windows.forEach(function (client) {
        client.postMessage({ type: "outbox-sent", cards: sent.map(function (s) { return s.html; }) });
      });
    });
  }));
});
