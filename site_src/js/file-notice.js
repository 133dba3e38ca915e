// A classic (non-module) script: it still runs when the page is opened from disk,
// where browsers block module scripts and workers. It then says how to serve the folder.
(function () {
  if (location.protocol !== "file:") return;
  document.addEventListener("DOMContentLoaded", function () {
    document.getElementById("file-notice").hidden = false;
    document.getElementById("status").textContent = "Not started: the page was opened from a file.";
    document.body.dataset.state = "error";
    document.body.dataset.reason = "file";
  });
})();
