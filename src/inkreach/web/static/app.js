// The page: choose a picture, a style and an arm; ask the local API for a plan; show it.
"use strict";
(function () {
  const $ = (id) => document.getElementById(id);
  const state = { file: null, styles: [], arms: [], armUpload: null, result: null };
  const STAGES = {
    queued: "waiting for a free worker", waiting: "sending the picture",
    arm: "checking the arm", load: "reading the picture", trace: "tracing strokes",
    merge: "joining strokes", place: "placing the drawing", route: "ordering strokes",
    motion: "timing the motion", check: "running the safety check",
    files: "writing the files", done: "finishing",
  };

  // ---- messages ---------------------------------------------------------------
  function showError(msg) {
    const e = $("error");
    e.textContent = msg;
    e.hidden = false;
  }
  function clearError() { $("error").hidden = true; $("error").textContent = ""; }

  // A page served to the network asks for the access token printed where it
  // was started, once, and keeps it in a same-site cookie.
  function askToken() {
    const t = window.prompt("This page needs its access token (printed where 'inkreach serve' was started):");
    if (!t) return false;
    document.cookie = "inkreach_token=" + encodeURIComponent(t.trim()) + "; path=/; SameSite=Strict";
    return true;
  }
  async function send(url, init) {
    let r = await fetch(url, init);
    if (r.status === 401 && askToken()) r = await fetch(url, init);
    return r;
  }

  async function getJSON(url) {
    const r = await send(url, { headers: { Accept: "application/json" } });
    const body = await r.json().catch(() => ({}));
    if (!r.ok) throw new Error(body.error || ("the server answered " + r.status));
    return body;
  }

  // ---- the picture ------------------------------------------------------------
  function setFile(f) {
    if (!f) return;
    state.file = f;
    const drop = $("drop");
    drop.classList.add("has-file");
    $("drop-title").textContent = f.name || "picture";
    $("drop-hint").textContent = (f.size / 1024).toFixed(0) + " kB \u00b7 drop another to replace, or";
    const img = $("thumb");
    if (img.src) URL.revokeObjectURL(img.src);
    img.src = URL.createObjectURL(f);
    img.alt = "The chosen picture";
    img.hidden = false;
    updateButton();
  }
  function setupDrop() {
    const drop = $("drop");
    const input = $("file");
    input.addEventListener("change", () => setFile(input.files[0]));
    drop.addEventListener("click", (ev) => {
      if (ev.target.closest("label") || ev.target === input) return;
      input.click();
    });
    drop.addEventListener("keydown", (ev) => {
      if (ev.key === "Enter" || ev.key === " ") { ev.preventDefault(); input.click(); }
    });
    ["dragenter", "dragover"].forEach((t) => drop.addEventListener(t, (ev) => {
      ev.preventDefault(); drop.classList.add("over");
    }));
    ["dragleave", "dragend"].forEach((t) => drop.addEventListener(t, () => drop.classList.remove("over")));
    drop.addEventListener("drop", (ev) => {
      ev.preventDefault(); drop.classList.remove("over");
      const f = ev.dataTransfer && ev.dataTransfer.files[0];
      if (f) setFile(f);
    });
  }

  // ---- styles and options -----------------------------------------------------
  function optionField(opt, prefix) {
    const wrap = document.createElement("div");
    wrap.className = "opt";
    const id = prefix + "-" + opt.name;
    const label = document.createElement("label");
    label.htmlFor = id;
    label.textContent = (opt.label || opt.name) + (opt.unit ? " (" + opt.unit + ")" : "");
    if (opt.label && opt.label !== opt.name) {
      const ident = document.createElement("code");
      ident.className = "ident";
      ident.textContent = opt.name;
      ident.title = "the name for --set on the command line";
      label.append(" ", ident);
    }
    const input = document.createElement("input");
    input.type = "text";
    input.id = id;
    input.name = opt.name;
    input.dataset.option = opt.name;
    input.autocomplete = "off";
    input.placeholder = opt.default === null || opt.default === undefined ? "auto" : String(opt.default);
    const help = document.createElement("p");
    help.className = "help";
    help.id = id + "-help";
    help.textContent = opt.help || "";
    input.setAttribute("aria-describedby", help.id);
    wrap.append(label, input, help);
    return wrap;
  }
  function renderStyleOptions() {
    const name = $("style").value;
    const st = state.styles.find((s) => s.name === name);
    const box = $("style-options");
    box.replaceChildren(...(st ? st.options.map((o) => optionField(o, "opt")) : []));
  }
  async function loadStyles() {
    const data = await getJSON("/api/styles");
    state.styles = data.styles || [];
    const sel = $("style");
    sel.replaceChildren(...state.styles.map((s) => new Option(s.name + (s.renders ? " \u2013 draws " + s.renders : ""), s.name)));
    if (state.styles.some((s) => s.name === "outline")) sel.value = "outline";
    sel.addEventListener("change", renderStyleOptions);
    renderStyleOptions();
    $("common-options").replaceChildren(...(data.common || []).map((o) => optionField(o, "common")));
  }

  // ---- arms -------------------------------------------------------------------
  function showArmText() {
    const v = $("arm").value;
    const upload = v === "__upload__";
    $("arm-upload").hidden = !upload;
    if (upload) {
      $("arm-toml").textContent = state.armUpload ? state.armUpload.text : "(choose an arm file)";
    } else {
      const a = state.arms.find((x) => x.name === v);
      $("arm-toml").textContent = a ? a.toml : "";
    }
    updateButton();
  }
  async function loadArms() {
    const data = await getJSON("/api/arms");
    state.arms = data.arms || [];
    const sel = $("arm");
    const opts = state.arms.map((a) => new Option(a.name + (a.name === data.default ? " (built-in default)" : " (built-in)"), a.name));
    opts.push(new Option("my own arm file\u2026", "__upload__"));
    sel.replaceChildren(...opts);
    sel.value = data.default || (state.arms[0] && state.arms[0].name) || "__upload__";
    sel.addEventListener("change", showArmText);
    $("arm-file").addEventListener("change", async () => {
      const f = $("arm-file").files[0];
      if (!f) return;
      if (f.size > 200000) { showError("That arm file is larger than 200 kB; an arm file is a few lines of TOML."); return; }
      state.armUpload = { name: f.name, text: await f.text() };
      $("arm-file-name").textContent = f.name;
      showArmText();
    });
    showArmText();
  }

  function updateButton() {
    const needArm = $("arm").value === "__upload__" && !state.armUpload;
    $("plan-button").disabled = !(state.file || $("text").value.trim()) || needArm || state.busy;
  }

  // ---- planning ---------------------------------------------------------------
  function token() {
    const a = new Uint8Array(12);
    crypto.getRandomValues(a);
    return Array.from(a, (b) => b.toString(16).padStart(2, "0")).join("");
  }
  function setBusy(on, text) {
    state.busy = on;
    $("progress").hidden = !on;
    if (text) $("progress-text").textContent = text;
    $("plan-button").textContent = on ? "Planning\u2026" : "Plan the drawing";
    updateButton();
  }
  async function makePlan() {
    const words = $("text").value.trim();
    if (!state.file && !words) { showError("Choose a picture or type some text first."); return; }
    clearError();
    const fd = new FormData();
    if (state.file) fd.append("image", state.file, state.file.name || "picture");
    if (words) fd.append(state.file ? "caption" : "text", words);
    fd.append("style", $("style").value);
    const armSel = $("arm").value;
    if (armSel === "__upload__") fd.append("arm", state.armUpload.text);
    else if (armSel) fd.append("arm", armSel);
    document.querySelectorAll("#style-options input, #common-options input").forEach((inp) => {
      if (inp.value.trim() !== "") fd.append(inp.dataset.option, inp.value.trim());
    });
    const id = token();
    setBusy(true, "Sending the picture\u2026");
    let polling = true;
    (async function poll() {
      while (polling) {
        await new Promise((r) => setTimeout(r, 350));
        if (!polling) break;
        try {
          const p = await getJSON("/api/progress/" + id);
          if (polling) $("progress-text").textContent = (STAGES[p.stage] || p.stage) + "\u2026";
        } catch (e) { /* progress is only a courtesy */ }
      }
    })();
    try {
      const r = await send("/api/plans", { method: "POST", body: fd, headers: { "X-Progress-Id": id } });
      const body = await r.json().catch(() => ({ error: "the server answered " + r.status + " without a readable message" }));
      if (!r.ok) throw new Error(body.error || ("the server answered " + r.status));
      state.result = body;
      showResult(body);
    } catch (e) {
      showError(e.message === "Failed to fetch" ? "The local server is not answering; is `inkreach serve` still running?" : e.message);
    } finally {
      polling = false;
      setBusy(false);
    }
  }

  // ---- figures ----------------------------------------------------------------
  function fmt(n, digits) {
    return Number(n).toLocaleString("en-GB", { maximumFractionDigits: digits, minimumFractionDigits: 0 });
  }
  function fmtDuration(s) {
    s = Number(s);
    if (s < 60) return fmt(s, 1) + " s";
    const m = Math.floor(s / 60), sec = Math.round(s - 60 * m);
    if (m < 60) return m + " min " + String(sec).padStart(2, "0") + " s";
    return Math.floor(m / 60) + " h " + String(m % 60).padStart(2, "0") + " min";
  }
  function fmtFidelity(f) {
    if (state.result && state.result.likeness) return state.result.likeness;
    if (typeof f === "number") return fmt(f, 3);
    if (f && typeof f === "object") {
      return Object.entries(f).filter(([, v]) => typeof v === "number")
        .slice(0, 3).map(([k, v]) => k.replace(/_/g, " ") + " " + fmt(v, 3)).join(" \u00b7 ");
    }
    return String(f);
  }
  const FORMATS = {
    strokes: (v) => fmt(v, 0),
    pen_lifts: (v) => fmt(v, 0),
    pen_down_mm: (v) => fmt(v / 1000 >= 1 ? v / 1000 : v, v / 1000 >= 1 ? 2 : 0) + (v / 1000 >= 1 ? " m" : " mm"),
    pen_up_mm: (v) => fmt(v / 1000 >= 1 ? v / 1000 : v, v / 1000 >= 1 ? 2 : 0) + (v / 1000 >= 1 ? " m" : " mm"),
    estimated_s: fmtDuration,
    drawing_mm: (v) => Array.isArray(v) ? fmt(v[0], 1) + " \u00d7 " + fmt(v[1], 1) + " mm" : String(v),
    min_conditioning: (v) => fmt(v, 3),
    fidelity: fmtFidelity,
    paper_note: String,
  };
  function showFigures(stats) {
    document.querySelectorAll("#figures [data-stat]").forEach((td) => {
      const k = td.dataset.stat;
      const v = stats[k];
      if (v === undefined || v === null) { td.textContent = "\u2013"; td.removeAttribute("data-value"); return; }
      td.dataset.value = typeof v === "object" ? JSON.stringify(v) : String(v);
      td.textContent = (FORMATS[k] || String)(v);
    });
    $("fidelity-row").hidden = stats.fidelity === undefined || stats.fidelity === null;
    $("paper-row").hidden = !stats.paper_note;
  }
  function showFiles(files) {
    document.querySelectorAll(".downloads .dl").forEach((a) => {
      const url = files[a.dataset.file];
      if (url) {
        a.href = url;
        a.setAttribute("download", a.dataset.file);
        a.setAttribute("aria-disabled", "false");
        a.hidden = false;
      } else {
        a.removeAttribute("href");
        a.setAttribute("aria-disabled", "true");
        a.hidden = a.dataset.file === "servo.csv" || a.dataset.file === "stepper.csv";
      }
    });
    $("downloads").hidden = false;
    const img = $("simulated-png");
    if (files["simulated.png"]) {
      img.src = files["simulated.png"] + "?inline=1";
      img.hidden = false;
      $("ink-empty").hidden = true;
    } else {
      img.hidden = true;
      $("ink-empty").hidden = false;
    }
  }
  function showResult(res) {
    setColours(res.colours);
    showFigures(res.stats || {});
    showFiles(res.files || {});
    const n = (res.strokes || []).length;
    const scrub = $("scrub");
    scrub.max = String(n);
    scrub.value = String(n);
    scrub.disabled = n === 0;
    drawPreview();
  }

  // ---- the preview drawing ----------------------------------------------------
  // The exported previews' colours, sent with every plan, so the page looks the same.
  let COLOURS = { order: ["#2c1e6e", "#b42d28"], usable: "#d5e8eb", edge: "#5c9272", travel: "#78808c" };
  function setColours(c) {
    if (!c || !Array.isArray(c.order) || c.order.length < 2) return;
    COLOURS = c;
    document.querySelectorAll(".sw.ramp").forEach((el) => {
      el.style.background = "linear-gradient(90deg, " + c.order.filter((_, i) => i % 8 === 0 || i === c.order.length - 1).join(", ") + ")";
    });
    document.querySelectorAll(".sw.usable").forEach((el) => { el.style.background = c.usable; });
  }
  function rampColour(t) {
    const r = COLOURS.order;
    const i = Math.round(Math.min(Math.max(t, 0), 1) * (r.length - 1));
    return r[i];
  }
  function showView(which) {
    const ink = which !== "order";
    $("view-ink").setAttribute("aria-selected", String(ink));
    $("view-order").setAttribute("aria-selected", String(!ink));
    $("view-ink-panel").hidden = !ink;
    $("view-order-panel").hidden = ink;
    if (!ink) drawPreview();
  }
  function bounds(res) {
    let xs = [], ys = [];
    const ws = res.workspace || {};
    const add = (p) => { xs.push(p[0]); ys.push(p[1]); };
    (ws.usable || []).forEach((poly) => poly.forEach(add));
    (ws.motors || []).forEach(add);
    (res.strokes || []).forEach((s) => s.forEach(add));
    if (!xs.length) return [-100, 100, 0, 150];
    return [Math.min(...xs), Math.max(...xs), Math.min(...ys), Math.max(...ys)];
  }
  function drawPreview() {
    const cv = $("preview");
    const rect = cv.getBoundingClientRect();
    const dpr = window.devicePixelRatio || 1;
    const W = Math.max(320, Math.round(rect.width || 640)), H = Math.round(W * 3 / 4);
    cv.width = W * dpr; cv.height = H * dpr;
    const g = cv.getContext("2d");
    g.setTransform(dpr, 0, 0, dpr, 0, 0);
    g.fillStyle = "#fffefa"; g.fillRect(0, 0, W, H);
    const res = state.result;
    if (!res) {
      g.fillStyle = "#8a8f99"; g.font = "italic 16px Georgia, serif"; g.textAlign = "center";
      g.fillText("The strokes will appear here, inside the arm's reach.", W / 2, H / 2);
      return;
    }
    const [x0, x1, y0, y1] = bounds(res);
    const pad = 24;
    const s = Math.min((W - 2 * pad) / Math.max(x1 - x0, 1e-6), (H - 2 * pad) / Math.max(y1 - y0, 1e-6));
    const ox = (W - s * (x1 - x0)) / 2, oy = (H - s * (y1 - y0)) / 2;
    // y away from the motors points up on screen
    const X = (x) => ox + (x - x0) * s, Y = (y) => H - (oy + (y - y0) * s);
    const path = (poly, close) => {
      g.beginPath();
      poly.forEach((p, i) => (i ? g.lineTo(X(p[0]), Y(p[1])) : g.moveTo(X(p[0]), Y(p[1]))));
      if (close) g.closePath();
    };
    const ws = res.workspace || {};
    g.lineWidth = 1;
    (ws.reach || []).forEach((poly) => { path(poly, true); g.strokeStyle = "#d9cdb8"; g.setLineDash([3, 4]); g.stroke(); });
    g.setLineDash([]);
    g.beginPath();
    (ws.usable || []).forEach((poly) => poly.forEach((p, i) => (i ? g.lineTo(X(p[0]), Y(p[1])) : g.moveTo(X(p[0]), Y(p[1])))));
    g.fillStyle = COLOURS.usable; g.fill("evenodd");
    (ws.usable || []).forEach((poly) => { path(poly, true); g.strokeStyle = COLOURS.edge || "#5c9272"; g.stroke(); });
    (ws.motors || []).forEach((m) => {
      g.beginPath(); g.arc(X(m[0]), Y(m[1]), 5, 0, 2 * Math.PI);
      g.fillStyle = "#1f2b3d"; g.fill();
    });
    const strokes = res.strokes || [];
    const upto = Number($("scrub").value);
    // pen-up travel first, faint, so strokes sit on top
    g.strokeStyle = "rgba(120,128,140,.45)"; g.lineWidth = 0.8; g.setLineDash([3, 3]);
    g.beginPath();
    for (let i = 1; i < Math.min(upto, strokes.length); i++) {
      const a = strokes[i - 1][strokes[i - 1].length - 1], b = strokes[i][0];
      g.moveTo(X(a[0]), Y(a[1])); g.lineTo(X(b[0]), Y(b[1]));
    }
    g.stroke(); g.setLineDash([]);
    g.lineWidth = 1.3; g.lineCap = "round"; g.lineJoin = "round";
    const n = strokes.length;
    for (let i = 0; i < Math.min(upto, n); i++) {
      const st = strokes[i];
      const c = rampColour(n > 1 ? i / (n - 1) : 0);
      if (st.length === 1) {
        g.beginPath(); g.arc(X(st[0][0]), Y(st[0][1]), 1.1, 0, 2 * Math.PI); g.fillStyle = c; g.fill();
      } else {
        path(st, false); g.strokeStyle = c; g.stroke();
      }
    }
    // a scale bar: the largest of 10, 20, 50, 100 mm that fits a fifth of the width
    const bar = [100, 50, 20, 10, 5].find((mm) => mm * s <= W / 5) || 5;
    g.strokeStyle = "#1f2b3d"; g.lineWidth = 2; g.setLineDash([]);
    g.beginPath(); g.moveTo(14, H - 16); g.lineTo(14 + bar * s, H - 16); g.stroke();
    g.fillStyle = "#4a5568"; g.font = "12px sans-serif"; g.textAlign = "left";
    g.fillText(bar + " mm", 14, H - 22);
    if (res.truncated) {
      g.fillStyle = "#8f3f21"; g.font = "12px sans-serif"; g.textAlign = "left";
      g.fillText("preview thinned: too many strokes to show them all", 10, 18);
    }
  }

  // ---- start ------------------------------------------------------------------
  async function start() {
    setupDrop();
    $("plan-button").addEventListener("click", makePlan);
    $("text").addEventListener("input", updateButton);
    $("scrub").addEventListener("input", drawPreview);
    $("view-ink").addEventListener("click", () => showView("ink"));
    $("view-order").addEventListener("click", () => showView("order"));
    window.addEventListener("resize", drawPreview);
    drawPreview();
    try {
      await Promise.all([loadStyles(), loadArms()]);
    } catch (e) {
      showError("Could not load the styles or arms: " + e.message);
    }
    document.body.dataset.ready = "1";
    updateButton();
  }
  start();
})();
