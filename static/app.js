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
