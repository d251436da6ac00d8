/* Filter and sort the reaction table of the review book's index. No network, no library. */
(function () {
  "use strict";
  var table = document.getElementById("reactions");
  var input = document.getElementById("filter");
  if (!table || !input) { return; }
  var body = table.tBodies[0];
  var counter = document.getElementById("shown-count");
  var rows = Array.prototype.slice.call(body.rows);

  function applyFilter() {
    var words = input.value.toLowerCase().split(/\s+/).filter(Boolean);
    var shown = 0;
    rows.forEach(function (row) {
      var text = row.textContent.toLowerCase();
      var keep = words.every(function (word) { return text.indexOf(word) !== -1; });
      row.hidden = !keep;
      if (keep) { shown += 1; }
    });
    if (counter) { counter.textContent = shown + " of " + rows.length; }
  }

  function cellValue(row, index, numeric) {
    var cell = row.cells[index];
    var text = cell.getAttribute("data-value");
    if (text === null) { text = cell.textContent.trim(); }
    if (!numeric) { return text.toLowerCase(); }
    var value = parseFloat(text);
    return isNaN(value) ? null : value;
  }

  function sortBy(header, index) {
    var numeric = header.getAttribute("data-type") === "number";
    var ascending = header.getAttribute("aria-sort") !== "ascending";
    Array.prototype.forEach.call(table.tHead.rows[0].cells, function (cell) {
      cell.removeAttribute("aria-sort");
    });
    header.setAttribute("aria-sort", ascending ? "ascending" : "descending");
    rows.sort(function (a, b) {
      var x = cellValue(a, index, numeric);
      var y = cellValue(b, index, numeric);
      if (x === y) { return 0; }
      if (x === null) { return 1; }   /* empty cells last, either way */
      if (y === null) { return -1; }
      var order = x < y ? -1 : 1;
      return ascending ? order : -order;
    });
    rows.forEach(function (row) { body.appendChild(row); });
  }

  Array.prototype.forEach.call(table.tHead.rows[0].cells, function (header, index) {
    header.tabIndex = 0;
    header.addEventListener("click", function () { sortBy(header, index); });
    header.addEventListener("keydown", function (event) {
      if (event.key === "Enter" || event.key === " ") { event.preventDefault(); sortBy(header, index); }
    });
  });
  input.addEventListener("input", applyFilter);
  var query = new URLSearchParams(window.location.search).get("filter");
  if (query) { input.value = query; }
  applyFilter();
}());
