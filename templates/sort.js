// Sorts the trials table by a column on a click of its header; the table reads the same without it.
(function () {
  var table = document.getElementById("trials");
  if (!table) return;
  var heads = table.tHead.rows[0].cells;
  Array.prototype.forEach.call(heads, function (th, col) {
    var button = document.createElement("button");
    button.type = "button";
    button.textContent = th.textContent;
    th.textContent = "";
    th.appendChild(button);
    var ascending = true;
    button.addEventListener("click", function () {
      var body = table.tBodies[0];
      var rows = Array.prototype.slice.call(body.rows);
      rows.sort(function (a, b) {
        var x = a.cells[col].textContent.trim(), y = b.cells[col].textContent.trim();
        var nx = parseFloat(x), ny = parseFloat(y);
        var c = (!isNaN(nx) && !isNaN(ny)) ? nx - ny : x.localeCompare(y);
        return ascending ? c : -c;
      });
      rows.forEach(function (r) { body.appendChild(r); });
      th.setAttribute("aria-sort", ascending ? "ascending" : "descending");
      ascending = !ascending;
    });
  });
})();
