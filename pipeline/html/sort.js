// Sort the index table by the clicked column; a second click reverses.
// Cells carry their sort key in data-sort; empty keys stay last.
document.querySelectorAll("table.sortable").forEach(function (table) {
  var heads = table.tHead.rows[0].cells;
  Array.prototype.forEach.call(heads, function (th, col) {
    if (!th.dataset.type) return;
    th.tabIndex = 0;
    function sort() {
      var dir = th.getAttribute("aria-sort") === "ascending" ? -1 : 1;
      Array.prototype.forEach.call(heads, function (h) { h.removeAttribute("aria-sort"); });
      th.setAttribute("aria-sort", dir === 1 ? "ascending" : "descending");
      var num = th.dataset.type === "num";
      var body = table.tBodies[0];
      var rows = Array.prototype.slice.call(body.rows);
      rows.sort(function (a, b) {
        var x = a.cells[col].dataset.sort, y = b.cells[col].dataset.sort;
        if (x === "" || y === "") return (x === "") - (y === "");
        var c = num ? parseFloat(x) - parseFloat(y) : x.localeCompare(y);
        return dir * c || (a.dataset.order - b.dataset.order);
      });
      rows.forEach(function (r) { body.appendChild(r); });
    }
    th.addEventListener("click", sort);
    th.addEventListener("keydown", function (e) { if (e.key === "Enter") sort(); });
  });
});
