// table.js: sort the settings table by a click on a column heading, and
// filter its rows by the words typed in the filter box (every word must
// appear in the row's text). Text is compared, never parsed as markup.
(function () {
  'use strict';
  var tables = document.querySelectorAll('table.sortable');
  Array.prototype.forEach.call(tables, function (table) {
    var heads = table.querySelectorAll('th');
    Array.prototype.forEach.call(heads, function (th, col) {
      th.addEventListener('click', function () {
        var body = table.tBodies[0];
        var rows = Array.prototype.slice.call(body.rows);
        var asc = th.getAttribute('data-dir') !== 'asc';
        Array.prototype.forEach.call(heads, function (h) { h.removeAttribute('data-dir'); });
        th.setAttribute('data-dir', asc ? 'asc' : 'desc');
        rows.sort(function (a, b) {
          var x = a.cells[col].getAttribute('data-v'), y = b.cells[col].getAttribute('data-v');
          var nx = parseFloat(x), ny = parseFloat(y);
          var r = (!isNaN(nx) && !isNaN(ny)) ? nx - ny : String(x).localeCompare(String(y));
          return asc ? r : -r;
        });
        rows.forEach(function (r) { body.appendChild(r); });
      });
    });
  });
  var box = document.getElementById('settings-filter');
  var table = document.getElementById('settings-table');
  if (!box || !table) return;
  var count = document.getElementById('settings-count');
  function apply() {
    var words = box.value.toLowerCase().split(/\s+/).filter(Boolean), shown = 0;
    Array.prototype.forEach.call(table.tBodies[0].rows, function (r) {
      var text = r.textContent.toLowerCase();
      var ok = words.every(function (w) { return text.indexOf(w) >= 0; });
      r.hidden = !ok;
      if (ok) shown++;
    });
    if (count) count.textContent = shown + ' of ' + table.tBodies[0].rows.length + ' settings shown';
  }
  box.addEventListener('input', apply);
  apply();
})();
