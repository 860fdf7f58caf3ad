/* Catalogue columns: send a redshift file to POST api/v1/catalogue with the page's link and save
   the streamed CSV. Messages are set as text (never markup). */
(function () {
  "use strict";
  function say(text, isError) {
    var box = document.getElementById("fd-catalogue-message");
    if (box) { box.textContent = text; box.className = isError ? "fd-error" : "fd-note"; }
  }
  function chosenModels() {
    var checked = document.querySelector("#fd-catalogue-models input:checked");
    return checked ? checked.value : "ref";
  }
  function apiBase() {
    // Dash's own prefix for requests (the page may sit at a deeper path than the app's root)
    var config = document.getElementById("_dash-config");
    try { return JSON.parse(config.textContent).requests_pathname_prefix || "/"; } catch (e) { return "/"; }
  }
  function send(file) {
    var query = window.location.search.replace(/^\?/, "");
    var url = new URL(apiBase() + "api/v1/catalogue?" + query + (query ? "&" : "") + "models=" + chosenModels(),
                      window.location.href);
    var form = new FormData();
    form.append("redshifts", file, file.name);
    say("sending " + file.name + " (" + file.size + " bytes)…", false);
    fetch(url.toString(), {method: "POST", body: form}).then(function (response) {
      if (!response.ok) {
        return response.json().then(function (body) {
          say("Nothing was made. " + ((body && body.error && body.error.message) || response.statusText), true);
        }, function () { say("Nothing was made: the server answered " + response.status, true); });
      }
      var rows = response.headers.get("X-Rows");
      var complete = "# complete: " + rows + " rows";
      return response.blob().then(function (blob) {
        // the server ends the file with its row count: a copy cut short on the way lacks it
        return blob.slice(Math.max(0, blob.size - 200)).text().then(function (tail) {
          return {blob: blob, whole: tail.trim().split("\n").pop() === complete};
        });
      }).then(function (got) {
        if (!got.whole) {
          say("Nothing was saved: the answer was cut short on the way (its last line is not \"" + complete +
              "\"); send the file again", true);
          return;
        }
        var blob = got.blob;
        var link = document.createElement("a");
        link.href = URL.createObjectURL(blob);
        link.download = file.name.replace(/\.[^.]*$/, "") + "-with-columns.csv";
        document.body.appendChild(link);
        link.click();
        link.remove();
        setTimeout(function () { URL.revokeObjectURL(link.href); }, 60000);
        say("done: " + rows + " rows, saved as " + link.download, false);
      }, function () {
        say("Nothing was saved: the download broke off before the end; send the file again", true);
      });
    }, function () { say("Nothing was made: the server could not be reached", true); });
  }
  window.fdeskSendCatalogue = send;  // also for the browser test, which cannot drive a file dialog
  document.addEventListener("click", function (event) {
    if (!event.target.closest || !event.target.closest("#fd-catalogue-run")) { return; }
    var picker = document.createElement("input");
    picker.type = "file";
    picker.accept = ".csv,text/csv,text/plain";
    picker.addEventListener("change", function () { if (picker.files.length) { send(picker.files[0]); } });
    picker.click();
  });
})();
