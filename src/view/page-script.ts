/**
 * The page's only script, sent inline with the response's CSP nonce: it sorts the ranked
 * table when a column heading is pressed (announcing the order to screen readers) and submits
 * the snapshot picker when a snapshot is chosen. Without it the page still works: the table
 * keeps its rank order and the picker has its own button.
 */
export const PAGE_SCRIPT = `
(function () {
  'use strict';
  var table = document.getElementById('segment-table');
  var status = document.getElementById('sort-status');
  if (table) {
    var headers = table.querySelectorAll('thead th');
    var compare = function (left, right, numeric) {
      var emptyLeft = left === '', emptyRight = right === '';
      if (emptyLeft || emptyRight) return emptyLeft === emptyRight ? 0 : emptyLeft ? 1 : -1;
      return numeric ? Number(left) - Number(right) : left.localeCompare(right);
    };
    Array.prototype.forEach.call(headers, function (header, column) {
      var button = header.querySelector('button');
      if (!button) return;
      button.addEventListener('click', function () {
        var numeric = header.getAttribute('data-type') === 'number';
        var direction = header.getAttribute('aria-sort') === 'ascending' ? 'descending' : 'ascending';
        // One <tbody> per segment: its figures row and its sentence row move together.
        var bodies = Array.prototype.slice.call(table.tBodies);
        var keyed = bodies.map(function (body, index) {
          var cell = body.rows[0] ? body.rows[0].cells[column] : null;
          return { body: body, index: index, key: cell ? cell.getAttribute('data-sort') || '' : '' };
        });
        keyed.sort(function (left, right) {
          var order = compare(left.key, right.key, numeric);
          // Missing figures stay last whichever way the column is sorted.
          if (left.key !== '' && right.key !== '' && direction === 'descending') order = -order;
          return order || left.index - right.index;
        });
        keyed.forEach(function (entry) { table.appendChild(entry.body); });
        Array.prototype.forEach.call(headers, function (other) { if (other.hasAttribute('aria-sort')) other.setAttribute('aria-sort', 'none'); });
        header.setAttribute('aria-sort', direction);
        if (status) status.textContent = 'Sorted by ' + button.textContent + ', ' + direction + '.';
      });
    });
  }
  var picker = document.getElementById('snapshot-picker');
  if (picker && picker.form) {
    picker.addEventListener('change', function () { picker.form.submit(); });
  }
})();
`;
