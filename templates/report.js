(function () {
  "use strict";
  // The chart font is embedded once, in the stylesheet's @font-face rule. Some browsers on
  // machines without any installed font refuse that data: URL now and then, but accept the same
  // bytes given to a FontFace, so the script hands them over too, read from the same rule.
  if (window.FontFace && document.fonts) {
    try {
      var sheets = document.styleSheets;
      var found = null;
      for (var s = 0; s < sheets.length && found === null; s++) {
        var rules = sheets[s].cssRules;
        for (var r = 0; r < rules.length; r++) {
          var rule = rules[r];
          if (rule.type === 5 && rule.style.getPropertyValue("font-family").indexOf("StudyPress Sans") >= 0) {
            var m = /base64,([A-Za-z0-9+\/=]+)/.exec(rule.style.getPropertyValue("src"));
            if (m) { found = m[1]; break; }
          }
        }
      }
      if (found !== null) {
        var raw = atob(found);
        var bytes = new Uint8Array(raw.length);
        for (var i = 0; i < raw.length; i++) { bytes[i] = raw.charCodeAt(i); }
        var face = new FontFace("StudyPress Sans", bytes.buffer);
        document.fonts.add(face);
        face.load().catch(function () { document.fonts.delete(face); });
      }
    } catch (e) { /* the stylesheet's rule remains */ }
  }

  // The manifest is the element just before this script, placed by the writer after all the
  // study's content (the verifier reads the same element); never looked up by id, which the
  // study's own HTML could imitate.
  var here = document.currentScript;
  var source = here ? here.previousElementSibling : null;
  if (!source || source.id !== "study-results" || source.type !== "application/json") { source = null; }
  var panel = document.getElementById("trace");
  if (!source || !panel) { return; }
  var manifest = JSON.parse(source.textContent);
  var byId = {};
  manifest.values.forEach(function (v) { byId[v.id] = v; });
  var inputs = {};
  manifest.inputs.forEach(function (i) { inputs[i.name] = i; });
  var pinned = null;

  function row(dl, name, value) {
    var dt = document.createElement("dt");
    dt.textContent = name;
    var dd = document.createElement("dd");
    dd.textContent = value;
    dl.appendChild(dt);
    dl.appendChild(dd);
  }

  function show(el) {
    var v = byId[el.getAttribute("data-v")];
    if (!v) { return; }
    panel.textContent = "";
    var dl = document.createElement("dl");
    row(dl, "block", v.block);
    row(dl, "test", v.test);
    if (v.term !== null) { row(dl, "term", v.term); }
    if (v.level !== null) { row(dl, "level", v.level); }
    if (v.pair !== null) { row(dl, "pair", v.pair.join(" vs ")); }
    row(dl, "statistic", v.stat);
    row(dl, "value", v.value === null ? "not defined: " + v.reason : String(v.value));
    v.inputs.forEach(function (name) {
      var i = inputs[name];
      if (i) {
        row(dl, "input", name + " (" + i.path + ")");
        row(dl, "SHA-256", i.sha256);
      }
    });
    row(dl, "manifest id", v.id);
    panel.appendChild(dl);
    panel.hidden = false;
  }

  function showInput(el) {
    var i = inputs[el.getAttribute("data-input")];
    if (!i) { return; }
    panel.textContent = "";
    var dl = document.createElement("dl");
    row(dl, "input", i.name);
    row(dl, "path", i.path);
    row(dl, "SHA-256", i.sha256);
    row(dl, el.getAttribute("data-field") === "rows" ? "rows read" : "rows used", String(i[el.getAttribute("data-field")]));
    if (i.query) { row(dl, "query", i.query); }
    if (i.resultSha256) { row(dl, "result SHA-256", i.resultSha256); }
    panel.appendChild(dl);
    panel.hidden = false;
  }

  function hide() {
    if (pinned === null) { panel.hidden = true; }
  }

  document.querySelectorAll("[data-input]").forEach(function (el) {
    el.addEventListener("mouseenter", function () { showInput(el); });
    el.addEventListener("mouseleave", hide);
    el.addEventListener("focus", function () { showInput(el); });
    el.addEventListener("blur", hide);
    el.addEventListener("click", function () { pinned = pinned === el ? null : el; showInput(el); });
  });
  document.querySelectorAll("[data-v]").forEach(function (el) {
    el.addEventListener("mouseenter", function () { show(el); });
    el.addEventListener("mouseleave", hide);
    el.addEventListener("focus", function () { show(el); });
    el.addEventListener("blur", hide);
    el.addEventListener("click", function () {
      pinned = pinned === el ? null : el;
      show(el);
    });
  });
  document.addEventListener("keydown", function (e) {
    if (e.key === "Escape") { pinned = null; panel.hidden = true; }
  });
})();
