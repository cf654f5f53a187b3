// Small helpers for the sortie sheet; no inline scripts so a strict content security policy holds.
document.addEventListener("click", function (event) {
  // "Common values one tap away": a chip fills the field it names.
  var chip = event.target.closest("[data-fill]");
  if (!chip) return;
  var form = chip.closest("form");
  var input = form && form.querySelector('[name="' + chip.dataset.fill + '"]');
  if (input) {
    input.value = chip.dataset.value;
    input.dispatchEvent(new Event("input", { bubbles: true }));
  }
});

document.addEventListener("htmx:configRequest", function (event) {
  // htmx names the element that carries hx-post (the conditions fieldset); the server needs the field
  // that was typed in, so that only a pasted METAR refills the other fields.
  var source = event.detail.triggeringEvent && event.detail.triggeringEvent.target;
  if (source && source.name && source !== event.detail.elt) {
    event.detail.headers["HX-Trigger-Name"] = source.name;
  }
});

document.addEventListener("change", function (event) {
  // The site sets the field elevation, so picking another one refreshes the density altitude too.
  var conditions = document.getElementById("conditions");
  if (event.target.name === "site_id" && conditions && window.htmx) {
    window.htmx.trigger(conditions, "change");
  }
});
