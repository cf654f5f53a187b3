// The sortie sheet without signal: attempts logged offline wait in an outbox on the tablet (IndexedDB),
// each with the Idempotency-Key its form was drawn with, and are sent when the signal returns (the
// page's `online` event, every page load, and Background Sync where the browser has it). The server
// creates each entry once however often it is sent. A refusal keeps the entry and says what to do.
// The service worker (/sw.js) loads this file too, for Background Sync; the page part needs a document.
(function (scope) {
  "use strict";
  var DB_NAME = "flarebook", STORE = "outbox", SYNC_TAG = "flarebook-outbox";

  function openDb() {
    return new Promise(function (resolve, reject) {
      var request = indexedDB.open(DB_NAME, 1);
      request.onupgradeneeded = function () { request.result.createObjectStore(STORE, { keyPath: "key" }); };
      request.onsuccess = function () { resolve(request.result); };
      request.onerror = function () { reject(request.error); };
    });
  }

  function withStore(mode, work) {
    return openDb().then(function (db) {
      return new Promise(function (resolve, reject) {
        var transaction = db.transaction(STORE, mode);
        var request = work(transaction.objectStore(STORE));
        transaction.oncomplete = function () { db.close(); resolve(request ? request.result : undefined); };
        transaction.onerror = transaction.onabort = function () { db.close(); reject(transaction.error); };
      });
    });
  }

  // What each refusal means at the practice area, and whether sending again later can help.
  function refusal(status, text) {
    if (status === 401) return { retry: true, message: "Your sign-in has ended. Sign in again on this tablet; the entry stays here and is sent after you sign in." };
    if (status === 403) return { retry: true, message: "The server did not accept this tablet's sign-in for this entry. Sign in again; the entry stays here and is sent after you sign in." };
    if (status === 404) return { retry: false, message: "This sortie is no longer on the server (it may have been discarded). The entry stays here: note its figures, then remove it." };
    if (status === 409) return { retry: false, message: "The sortie was signed meanwhile, so this entry was not added. Start an amendment of the sortie and log it there, then remove it here." };
    if (status === 422) return { retry: false, message: (text || "The server asks for a look at this entry.") + " Correct it on a new entry, or send it as entered." };
    return { retry: true, message: "The server could not take the entry just now (" + status + "). It stays here and is sent again." };
  }

  function alertText(html) {
    var match = /role="alert"[^>]*>([\s\S]*?)<\/(p|div)>/.exec(html || "");
    if (!match) return "";
    var items = /<ul>([\s\S]*?)<\/ul>/.exec(html);
    var text = (match[1] + (items ? " " + items[1] : "")).replace(/<[^>]+>/g, " ").replace(/&#3[49];|&quot;/g, '"')
      .replace(/&amp;/g, "&").replace(/\s+/g, " ").replace("▲", "").trim();
    return text;
  }

  var outbox = {
    all: function () { return withStore("readonly", function (store) { return store.getAll(); }); },
    put: function (entry) { return withStore("readwrite", function (store) { return store.put(entry); }); },
    remove: function (key) { return withStore("readwrite", function (store) { return store.delete(key); }); },

    // Send one entry. csrf: the page's current token (a new sign-in changes it), or the one kept with it.
    send: function (entry, csrf) {
      var headers = { "Content-Type": "application/x-www-form-urlencoded", "HX-Request": "true",
                      "Idempotency-Key": entry.key, "X-CSRF-Token": csrf || entry.csrf };
      return fetch(entry.url, { method: "POST", headers: headers, body: entry.body, credentials: "same-origin",
                                redirect: "manual", cache: "no-store" })
        .then(function (response) {
          return response.text().then(function (text) {
            if (response.ok) return { state: "sent", html: text };
            if (response.type === "opaqueredirect") return { state: "refused", status: 401, refusal: refusal(401) };
            return { state: "refused", status: response.status, refusal: refusal(response.status, alertText(text)),
                     warnings: text.indexOf('data-warnings="1"') >= 0 };
          });
        }, function () { return { state: "offline" }; });
    },

    // Send every entry that may go (waiting, or refused for a reason that a new try can mend).
    replayAll: function (csrf, options) {
      if (outbox.busy) return outbox.busy;
      var force = options && options.force;
      outbox.busy = outbox.all().then(function (entries) {
        var sent = [];
        var chain = Promise.resolve();
        entries.sort(function (a, b) { return a.queued_at - b.queued_at; }).forEach(function (entry) {
          if (entry.state === "refused" && !entry.retry && !force) return;
          chain = chain.then(function () {
            return outbox.send(entry, csrf).then(function (result) {
              if (result.state === "sent") { sent.push({ entry: entry, html: result.html }); return outbox.remove(entry.key); }
              if (result.state === "offline") return null;
              entry.state = "refused";
              entry.status = result.status;
              entry.retry = result.refusal.retry;
              entry.message = result.refusal.message;
              entry.warnings = !!result.warnings;
              return outbox.put(entry);
            });
          });
        });
        return chain.then(function () { return sent; });
      }).finally(function () { outbox.busy = null; });
      return outbox.busy;
    },
    SYNC_TAG: SYNC_TAG,
  };
  scope.FlarebookOutbox = outbox;

  if (typeof document === "undefined") return;  // the service worker stops here

  // ---- the page: queue, show, replay ----------------------------------------------------------
  var FIGURES = [["entry_height_ft", "entry", "ft"], ["descent_kias", "descent", "KIAS"], ["nr_low_pct", "NR low", "%"],
                 ["nr_high_pct", "NR high", "%"], ["flare_height_ft", "flare", "ft"], ["touchdown_speed_kt", "end", "kt"],
                 ["point_error_ft", "point", "ft"], ["heading_error_deg", "heading", "°"]];
  var KINDS = { straight_in: "Straight-in", turn_180: "180° turn", turn_360: "360° turn", hovering: "Hovering" };
  var ENDS = { power_recovery: "Power recovery", to_hover: "To a hover", touchdown: "Full touchdown" };

  function csrfToken() {
    try { return JSON.parse(document.body.getAttribute("hx-headers") || "{}")["X-CSRF-Token"] || ""; } catch (e) { return ""; }
  }
  function sheetForm() { return document.querySelector('form[data-outbox="attempt"]'); }
  function newKey() {
    if (self.crypto && crypto.randomUUID) return crypto.randomUUID();
    return String(Date.now()) + "-" + Math.random().toString(16).slice(2);
  }

  function describe(entry) {
    var fields = new URLSearchParams(entry.body);
    var parts = FIGURES.filter(function (f) { return fields.get(f[0]); })
      .map(function (f) { return f[1] + " " + fields.get(f[0]) + " " + f[2]; });
    return (KINDS[fields.get("maneuver")] || "Attempt") + " · " + (ENDS[fields.get("termination")] || "") +
      (parts.length ? " (" + parts.join(", ") + ")" : "");
  }

  function button(text, action, key) {
    var b = document.createElement("button");
    b.type = "button"; b.className = "quiet small"; b.textContent = text;
    b.dataset.outboxAction = action; b.dataset.key = key;
    return b;
  }

  function render() {
    var list = document.getElementById("outbox-list");
    var section = document.getElementById("outbox");
    if (!list) return Promise.resolve([]);
    var sortie = sheetForm() && sheetForm().dataset.sortie;
    return outbox.all().then(function (entries) {
      var mine = entries.filter(function (e) { return String(e.sortie_id) === String(sortie); })
        .sort(function (a, b) { return a.queued_at - b.queued_at; });
      list.textContent = "";
      mine.forEach(function (entry) {
        var item = document.createElement("li");
        item.className = "outbox-entry " + (entry.state === "refused" ? "refused" : "waiting");
        var what = document.createElement("span");
        what.className = "what";
        what.textContent = describe(entry);
        var state = document.createElement("span");
        state.className = "state-word";
        state.textContent = entry.state === "refused" ? "▲ Not sent: " + entry.message : "◷ Waiting to send";
        item.appendChild(what); item.appendChild(state);
        if (entry.state === "refused") {
          var actions = document.createElement("span");
          actions.className = "line-actions";
          actions.appendChild(button(entry.warnings ? "Send as entered" : "Send again", entry.warnings ? "confirm" : "retry", entry.key));
          if (entry.status === 401 || entry.status === 403) {
            var signin = document.createElement("a");
            signin.className = "button quiet small"; signin.href = "/signin"; signin.textContent = "Sign in again";
            actions.appendChild(signin);
          }
          actions.appendChild(button("Remove from this tablet", "remove", entry.key));
          item.appendChild(actions);
        }
        list.appendChild(item);
      });
      section.hidden = mine.length === 0;
      var form = sheetForm();
      if (form) {
        var title = form.querySelector(".form-title");
        var next = Number(form.dataset.nextSequence) + mine.length;
        if (title) title.textContent = "Log attempt #" + next;
      }
      return mine;
    });
  }

  function showConnection() {
    var banner = document.getElementById("connection");
    if (!banner) return;
    banner.hidden = navigator.onLine;
    banner.textContent = navigator.onLine ? "" : "No signal: attempts you log are kept on this tablet and sent when the signal returns.";
  }

  // A card the server sent for a replayed entry joins the list, replacing itself if already there.
  function placeCard(html) {
    var holder = document.createElement("div");
    holder.innerHTML = html;
    var card = holder.querySelector("article.attempt");
    var list = document.getElementById("attempts");
    if (!card || !list) return;
    var existing = document.getElementById(card.id);
    if (existing) existing.replaceWith(card); else list.appendChild(card);
    if (window.htmx) window.htmx.process(card);
  }

  function replay(options) {
    if (!navigator.onLine && !(options && options.force)) return render();
    return outbox.replayAll(csrfToken(), options).then(function (sent) {
      sent.forEach(function (s) { placeCard(s.html); });
      if (sent.length) {
        cachePage();
        var state = sheetForm() && sheetForm().querySelector(".save-state");
        if (state) { state.textContent = "Sent: " + sent.length + (sent.length === 1 ? " entry that was" : " entries that were") + " waiting."; state.dataset.kind = "saved"; }
      }
      return render();
    });
  }

  function queue(form, body, why) {
    var params = new URLSearchParams(body);
    var key = params.get("idempotency_key") || newKey();
    params.set("idempotency_key", key);
    params.delete("csrf_token");
    var entry = { key: key, url: form.getAttribute("hx-post"), body: params.toString(), csrf: csrfToken(),
                  sortie_id: form.dataset.sortie, queued_at: Date.now(), state: why ? "refused" : "waiting" };
    if (why) { entry.status = why.status; entry.retry = why.refusal.retry; entry.message = why.refusal.message; }
    return outbox.put(entry).then(function () {
      resetForm(form);
      var state = form.querySelector(".save-state");
      if (state) {
        state.textContent = why ? "Not sent: " + why.refusal.message : "No signal: kept on this tablet, waiting to send.";
        state.dataset.kind = "waiting";
      }
      if ("serviceWorker" in navigator) {
        navigator.serviceWorker.ready.then(function (reg) { if (reg.sync) return reg.sync.register(SYNC_TAG); }).catch(function () {});
      }
      return render();
    });
  }

  // Like the form the server draws after an add: same kind and carried figures, a new key, the rest empty.
  var KEEP = { maneuver: 1, termination: 1, landing_dir_deg: 1, entry_height_ft: 1, entry_kias: 1, csrf_token: 1 };
  function resetForm(form) {
    Array.prototype.forEach.call(form.elements, function (el) {
      if (!el.name || KEEP[el.name]) return;
      if (el.name === "idempotency_key") { el.value = newKey(); return; }
      if (el.type === "checkbox") { el.checked = false; return; }
      if (el.type === "radio") { if (el.name === "grade") el.checked = el.value === ""; return; }
      el.value = "";
    });
    var counter = form.querySelector(".counter");
    if (counter) counter.textContent = "0 of 2,000 characters";
  }

  // Snapshot the form before htmx disables it for the request, so a failed send can be queued.
  document.addEventListener("htmx:beforeRequest", function (event) {
    var form = event.detail.elt;
    if (!form.matches || !form.matches('form[data-outbox="attempt"]')) return;
    form.outboxBody = new URLSearchParams(new FormData(form)).toString();
    if (!navigator.onLine) {  // known to be offline: do not wait for the request to fail
      event.preventDefault();
      queue(form, form.outboxBody);
    }
  });
  function queueFailed(event) {
    var form = event.detail.elt;
    if (form.matches && form.matches('form[data-outbox="attempt"]') && form.outboxBody) queue(form, form.outboxBody);
  }
  document.addEventListener("htmx:sendError", queueFailed);
  document.addEventListener("htmx:timeout", queueFailed);
  document.addEventListener("htmx:beforeOnLoad", function (event) {
    // The sign-in ended: keep the entry on the tablet rather than leave the page and lose it.
    var form = event.detail.elt;
    if (event.detail.xhr.status === 401 && form.matches && form.matches('form[data-outbox="attempt"]')) {
      event.preventDefault();
      queue(form, form.outboxBody, { status: 401, refusal: refusal(401) });
    }
  });

  document.addEventListener("click", function (event) {
    var action = event.target.closest("[data-outbox-action]");
    if (!action) return;
    var key = action.dataset.key;
    outbox.all().then(function (entries) {
      var entry = entries.filter(function (e) { return e.key === key; })[0];
      if (!entry) return render();
      if (action.dataset.outboxAction === "remove") {
        if (!window.confirm("Remove this entry from the tablet? It was never saved on the server.")) return null;
        return outbox.remove(key).then(render);
      }
      if (action.dataset.outboxAction === "confirm") {
        var params = new URLSearchParams(entry.body);
        params.set("confirm_unusual", "1");
        entry.body = params.toString();
      }
      entry.state = "waiting";
      return outbox.put(entry).then(function () { return replay({ force: true }); });
    });
  });

  // ---- the sheet itself, kept for offline use ------------------------------------------------
  var cacheTimer = null;
  function cachePage() {
    if (!("caches" in self) || !sheetForm()) return;
    clearTimeout(cacheTimer);
    cacheTimer = setTimeout(function () {
      caches.open("flarebook-sheets").then(function (cache) { return cache.add(location.pathname); })
        .then(function () { document.documentElement.dataset.offlineReady = "1"; }).catch(function () {});
    }, 300);
  }
  document.addEventListener("htmx:afterSettle", function (event) {
    var elt = event.detail.elt;
    if (elt && elt.closest && elt.closest(".attempts-section, #sortie-details")) cachePage();
  });
  // A form that sends the page away (discarding the draft, say) may remove the sheet it shows: a copy
  // asked for after that would only meet a 404, so none is asked for once the page is on its way out.
  function forgetPendingCopy() { clearTimeout(cacheTimer); }
  document.addEventListener("submit", forgetPendingCopy, true);
  window.addEventListener("beforeunload", forgetPendingCopy);

  window.addEventListener("online", function () { showConnection(); replay(); });
  window.addEventListener("offline", showConnection);
  if ("serviceWorker" in navigator) {
    navigator.serviceWorker.addEventListener("message", function (event) {
      if (event.data && event.data.type === "outbox-sent") {
        (event.data.cards || []).forEach(placeCard);
        render();
      }
    });
  }
  document.addEventListener("DOMContentLoaded", function () {
    showConnection();
    replay();
    if ("serviceWorker" in navigator && sheetForm()) {
      navigator.serviceWorker.register("/sw.js", { scope: "/" }).then(function () { return navigator.serviceWorker.ready; })
        .then(function () { if (navigator.onLine) cachePage(); }).catch(function () {});
    }
  });
  scope.FlarebookSheet = { replay: replay, render: render };
})(self);
