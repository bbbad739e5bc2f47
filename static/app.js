// Small progressive enhancements; every page reads without JavaScript.
// Sortable tables: click a header to sort by that column (numbers numerically).
document.querySelectorAll("table.sortable").forEach((table) => {
  const headers = table.querySelectorAll("thead th");
  headers.forEach((th, col) => {
    th.title = "Sort by this column";
    th.addEventListener("click", () => {
      const body = table.tBodies[0];
      const rows = Array.from(body.rows);
      const dir = th.dataset.dir === "asc" ? -1 : 1;
      headers.forEach((h) => delete h.dataset.dir);
      th.dataset.dir = dir === 1 ? "asc" : "desc";
      const key = (row) => {
        const text = (row.cells[col]?.dataset.sort ?? row.cells[col]?.textContent ?? "").trim();
        const n = parseFloat(text.replace(/[^0-9eE+\-.]/g, ""));
        return Number.isNaN(n) || !/[0-9]/.test(text) ? text.toLowerCase() : n;
      };
      rows.sort((a, b) => {
        const ka = key(a), kb = key(b);
        if (typeof ka === typeof kb) return ka < kb ? -dir : ka > kb ? dir : 0;
        return typeof ka === "number" ? -1 : 1;
      });
      rows.forEach((r) => body.appendChild(r));
    });
  });
});

// Live updates: a study page listens to its study's change stream and refreshes the
// parts that changed in place (the page keeps working without it: reload shows all).
(() => {
  const title = document.querySelector("[data-study]");
  if (!title || !window.EventSource) return;
  const study = title.dataset.study;
  const well = title.dataset.well;
  const feed = document.getElementById("live-feed");
  // Changes can arrive close together and their fetches finish in any order: only the
  // newest fetch may write, so an older page never overwrites a newer one.
  let newest = 0;
  const refresh = async (selectors) => {
    const ticket = ++newest;
    const res = await fetch(window.location.pathname + window.location.search, { credentials: "same-origin" });
    if (!res.ok || ticket !== newest) return;
    const html = await res.text();
    if (ticket !== newest) return;
    const doc = new DOMParser().parseFromString(html, "text/html");
    for (const sel of selectors) {
      const mine = document.querySelector(sel);
      const theirs = doc.querySelector(sel);
      if (!mine || !theirs) continue;
      // Never throw away what someone is typing: a part holding an edited form keeps
      // its forms and takes only the rest of the new content.
      const editing = Array.from(mine.querySelectorAll("form")).filter((f) => f.dataset.dirty || f.contains(document.activeElement));
      if (editing.length === 0) {
        mine.replaceWith(theirs);
        continue;
      }
      mine.querySelectorAll(".pick-editor").forEach((panel) => {
        const twin = theirs.querySelector(`.pick-editor[data-event="${panel.dataset.event}"]`);
        const form = panel.querySelector("form");
        if (!twin) return;
        if (form && editing.includes(form)) {
          // Refresh the text above the form; tell the user the pick moved under them.
          Array.from(panel.children).filter((c) => c !== form && c.tagName !== "H3").forEach((c) => c.remove());
          Array.from(twin.children).filter((c) => c.tagName !== "FORM" && c.tagName !== "H3").reverse().forEach((c) => form.before(c));
          if (!panel.querySelector(".moved-note")) {
            const note = document.createElement("p");
            note.className = "moved-note problems-box";
            note.textContent = "Someone else changed this pick while you were editing; saving now will be refused with their change shown.";
            form.before(note);
          }
        } else {
          panel.replaceWith(twin);
        }
      });
    }
    wireChartClicks();
  };
  const source = new EventSource(`/api/studies/${study}/events`);
  source.addEventListener("change", (msg) => {
    const e = JSON.parse(msg.data);
    if (feed) {
      const line = document.createElement("p");
      line.className = "live-line";
      line.textContent = `${new Date().toLocaleTimeString()}: ${e.summary}`;
      feed.prepend(line);
    }
    if (well && String(e.well_id) === well) {
      refresh(["#review-panel", "#comments", "#interpretation", "#charts"]);
    } else if (!well) {
      refresh(["#wells-table", "#overview-charts"]);
    }
  });
  source.addEventListener("missed", () => window.location.reload());
})();

// Mark forms the user has typed into, so live refreshes leave them alone.
document.addEventListener("input", (ev) => {
  const form = ev.target.closest && ev.target.closest("form");
  if (form) form.dataset.dirty = "1";
});

// Clicking the subsidence chart sets the rift onset (first click) and end (second
// click) of rift event 1 to the nearest surface age, then tries the timing at once.
function wireChartClicks() {
  const chart = document.querySelector("#charts figure.subsidence svg");
  const form = document.querySelector('.pick-editor[data-event="1"] form.pick-form');
  if (!chart || !form || chart.dataset.wired) return;
  chart.dataset.wired = "1";
  const axis = chart.querySelector('[data-series="age-axis"]');
  if (!axis) return;
  const ages = Array.from(document.querySelectorAll("#surface-ages option")).map((o) => parseFloat(o.value));
  let first = null;
  chart.style.cursor = "crosshair";
  chart.addEventListener("click", (ev) => {
    const box = chart.getBoundingClientRect();
    const vb = chart.viewBox.baseVal;
    const px = ((ev.clientX - box.left) / box.width) * (vb && vb.width ? vb.width : box.width);
    const a = parseFloat(axis.dataset.ageAMa), pa = parseFloat(axis.dataset.pxA);
    const b = parseFloat(axis.dataset.ageBMa), pb = parseFloat(axis.dataset.pxB);
    const age = a + ((px - pa) / (pb - pa)) * (b - a);
    const nearest = ages.reduce((best, x) => (Math.abs(x - age) < Math.abs(best - age) ? x : best), ages[0]);
    if (first === null) {
      first = nearest;
      form.querySelector('[name="rift_onset_ma"]').value = nearest;
      const hint = document.getElementById("click-hint");
      if (hint) hint.textContent = `Rift onset set to ${nearest} Ma; now click the rift end.`;
      return;
    }
    const onset = Math.max(first, nearest), end = Math.min(first, nearest);
    first = null;
    if (onset === end) return;
    const url = new URL(window.location.href);
    url.searchParams.set("trial_onset_ma", onset);
    url.searchParams.set("trial_end_ma", end);
    url.hash = "review";
    window.location.href = url.toString();
  });
}
wireChartClicks();

// "Try without saving": go to the page with just the trial ages, so the form's
// other fields (its CSRF token among them) stay out of the address bar.
document.addEventListener("click", (ev) => {
  const button = ev.target.closest && ev.target.closest('button[name="preview"]');
  if (!button) return;
  const form = button.form;
  const onset = form.querySelector('[name="rift_onset_ma"]').value;
  const end = form.querySelector('[name="rift_end_ma"]').value;
  if (!onset || !end) return;
  ev.preventDefault();
  const url = new URL(window.location.href);
  url.search = "";
  url.searchParams.set("trial_onset_ma", onset);
  url.searchParams.set("trial_end_ma", end);
  url.hash = "review";
  window.location.href = url.toString();
});
