/* The measurement and covariance file inputs forget a file once it has been read, so choosing
   the same (corrected) file again is a new choice: the browser fires "change" only when the
   selection differs. The upload component has read the files synchronously in its own handler
   (React's, on the page root); this capture-phase listener clears the input right after. */
(function () {
  "use strict";
  document.addEventListener("change", function (event) {
    var input = event.target;
    if (!input || input.type !== "file" || !input.closest || !input.closest(".fd-upload")) { return; }
    window.setTimeout(function () { input.value = ""; }, 0);
  }, true);
})();
