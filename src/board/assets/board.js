// The board works without this script; it only adds a print button.
"use strict";
document.addEventListener("DOMContentLoaded", function () {
  document.querySelectorAll("[data-print]").forEach(function (button) {
    button.addEventListener("click", function () {
      window.print();
    });
  });
});
