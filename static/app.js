// Small helpers for the sortie sheet; no inline scripts so a strict content security policy holds.
(function () {
  "use strict";

  // ---- which field the instructor typed in, and when ----------------------------------------
  // A server answer never overwrites a field typed in after the request it answers was sent.
  var typedAt = new WeakMap();
  var clock = 0;  // a counter, not the wall clock: two keys in one millisecond stay in order
  document.addEventListener("input", function (event) {
    if (event.isTrusted && event.target.name) typedAt.set(event.target, ++clock);
  }, true);
  document.addEventListener("change", function (event) {
    if (event.isTrusted && event.target.name) typedAt.set(event.target, ++clock);
  }, true);
  function lastTyped(element) { return typedAt.get(element) || 0; }

  function setValue(input, value) {
    input.value = value;
    input.dispatchEvent(new Event("input", { bubbles: true }));  // untrusted: not counted as typing
  }

  document.addEventListener("click", function (event) {
    // "Common values one tap away": a chip fills the field it names.
    var chip = event.target.closest("[data-fill]");
    if (chip) {
      var form = chip.closest("form");
      var input = form && form.querySelector('[name="' + chip.dataset.fill + '"]');
      if (input) {
        setValue(input, chip.dataset.value);
        typedAt.set(input, ++clock);
        uncarry(input);
      }
      return;
    }
    var clear = event.target.closest("[data-clear-carried]");
    if (clear) {
      var carriedForm = clear.closest("form");
      carriedForm.querySelectorAll("[data-carried-field]").forEach(function (wrap) {
        var field = wrap.querySelector("input");
        if (field) setValue(field, "");
        uncarry(field);
      });
      var note = clear.closest(".carried-note");
      if (note) note.remove();
      var first = carriedForm.querySelector('[name="landing_dir_deg"]');
      if (first) first.focus();
    }
  });

  // A carried-over value that is typed over, or cleared, is no longer marked as carried.
  function uncarry(input) {
    var wrap = input && input.closest("[data-carried-field]");
    if (!wrap) return;
    wrap.removeAttribute("data-carried-field");
    wrap.classList.add("was-carried");
    var hint = wrap.querySelector(".hint");
    if (hint) hint.remove();
    input.removeAttribute("aria-describedby");
  }
  document.addEventListener("input", function (event) {
    if (event.isTrusted) uncarry(event.target);
  });

  // ---- the conditions: a pasted METAR fills only what was not typed since -------------------
  document.addEventListener("htmx:configRequest", function (event) {
    // htmx names the element that carries hx-post (the conditions fieldset); say which field was typed in.
    var source = event.detail.triggeringEvent && event.detail.triggeringEvent.target;
    if (source && source.name && source !== event.detail.elt) event.detail.headers["HX-Trigger-Name"] = source.name;
  });

  document.addEventListener("htmx:afterSwap", function () {
    var readout = document.getElementById("conditions-readout");
    if (!readout || !readout.dataset.fill) return;
    var filled = JSON.parse(readout.dataset.fill);
    delete readout.dataset.fill;
    var form = readout.closest("form");
    var metar = form && form.querySelector('[name="metar"]');
    var pastedAt = metar ? lastTyped(metar) : 0;
    var kept = false;
    Object.keys(filled).forEach(function (name) {
      var input = form.querySelector('[name="' + name + '"]');
      if (!input || String(input.value) === String(filled[name])) return;
      if (lastTyped(input) > pastedAt) { kept = true; return; }  // typed after the METAR: the instructor's
      if (input === document.activeElement) {
        // The instructor is in this field: a value written under their finger would have what they type
        // added to it ("22" then "19" reads "2219"). Filled when they leave it, if they typed nothing.
        input.addEventListener("blur", function () {
          if (lastTyped(input) <= pastedAt) setValue(input, filled[name]);
          else noteKept(readout);
        }, { once: true });
        return;
      }
      setValue(input, filled[name]);
    });
    if (kept) noteKept(readout);
  });

  function noteKept(readout) {
    if (!readout.isConnected || readout.querySelector(".kept-typed")) return;
    var note = document.createElement("p");
    note.className = "hint kept-typed";
    note.textContent = "Fields typed in after the METAR keep what you typed.";
    readout.appendChild(note);
  }

  document.addEventListener("change", function (event) {
    // The site sets the field elevation, so picking another one refreshes the density altitude too.
    var conditions = document.getElementById("conditions");
    if (event.target.name === "site_id" && conditions && window.htmx) {
      window.htmx.trigger(conditions, "change");
    }
  });

  // ---- remarks: the limit shown as one types ------------------------------------------------
  document.addEventListener("input", function (event) {
    var box = event.target;
    if (!box.dataset || !box.dataset.counter) return;
    var counter = document.getElementById(box.dataset.counter);
    var limit = Number(box.getAttribute("maxlength"));
    if (counter) counter.textContent = box.value.length.toLocaleString("en-GB") + " of " + limit.toLocaleString("en-GB") + " characters";
  });

  // ---- forms that must be sent once ---------------------------------------------------------
  document.addEventListener("submit", function (event) {
    var form = event.target;
    if (form.dataset.confirm && !window.confirm(form.dataset.confirm)) {
      event.preventDefault();
      return;
    }
    if (form.hasAttribute("data-once")) {
      if (form.dataset.sent) { event.preventDefault(); return; }  // a second tap: the first is on its way
      form.dataset.sent = "1";
      var button = form.querySelector("button[type=submit]");
      if (button) { button.dataset.label = button.textContent; button.setAttribute("aria-disabled", "true"); button.textContent = "Sending…"; }
    }
  });

  // Back to a page kept in the browser's memory: its forms may be sent again (a new key is drawn on reload).
  window.addEventListener("pageshow", function (event) {
    if (!event.persisted) return;
    document.querySelectorAll("form[data-once]").forEach(function (form) {
      delete form.dataset.sent;
      var button = form.querySelector("button[type=submit]");
      if (button && button.dataset.label) { button.removeAttribute("aria-disabled"); button.textContent = button.dataset.label; }
    });
  });

  // The attempt form drawn after an add: a tap on it within a second, before anything was typed, is
  // the second half of a double tap on "Add attempt", not a new attempt.
  var DOUBLE_TAP_MS = 1000;
  document.addEventListener("htmx:confirm", function (event) {
    var form = event.detail.elt;
    if (form.id !== "attempt-form" || !form.dataset.drawnAt) return;
    var untouched = !Array.prototype.some.call(form.elements, function (el) { return lastTyped(el) > Number(form.dataset.drawnClock); });
    if (untouched && Date.now() - Number(form.dataset.drawnAt) < DOUBLE_TAP_MS) event.preventDefault();
  });

  // ---- saving state, and errors where the eye is --------------------------------------------
  function saveState(form, text, kind) {
    var state = form && form.querySelector(".save-state");
    if (!state) return;
    state.textContent = text;
    state.dataset.kind = kind || "";
  }
  document.addEventListener("htmx:beforeRequest", function (event) {
    if (event.detail.elt.classList && event.detail.elt.classList.contains("attempt-form")) saveState(event.detail.elt, "Saving…", "saving");
  });
  document.addEventListener("htmx:afterSettle", function (event) {
    var added = document.getElementById("attempt-form");
    if (added && !added.dataset.drawnAt) {
      added.dataset.drawnAt = String(Date.now());
      added.dataset.drawnClock = String(clock);
      var last = document.querySelector("#attempts article.attempt:last-of-type h3");
      if (event.detail.requestConfig && event.detail.requestConfig.elt && event.detail.requestConfig.elt.id === "attempt-form" && last) {
        saveState(added, "Saved: " + last.textContent.trim() + ".", "saved");
      }
    }
    var alert = event.detail.elt && event.detail.elt.querySelector && event.detail.elt.querySelector("[role=alert]");
    if (alert) alert.scrollIntoView({ block: "center" });
  });
  document.addEventListener("htmx:sendError", function (event) {
    var form = event.detail.elt;
    if (form.classList && form.classList.contains("attempt-form") && form.id !== "attempt-form") {
      saveState(form, "Not saved: no connection. Your changes are still here; save again when the signal returns.", "failed");
    }
  });
  document.addEventListener("htmx:responseError", function (event) {
    var form = event.detail.elt;
    if (form.classList && form.classList.contains("attempt-form") && event.detail.xhr.status >= 500) {
      saveState(form, "Not saved: the server had a problem (" + event.detail.xhr.status + "). Your entry is still here; try again.", "failed");
    }
  });

  document.addEventListener("DOMContentLoaded", function () {
    var form = document.getElementById("attempt-form");
    if (form) { form.dataset.drawnAt = "0"; form.dataset.drawnClock = "0"; }
    var alert = document.querySelector("main [role=alert]");
    if (alert) alert.scrollIntoView({ block: "center" });
  });
})();
