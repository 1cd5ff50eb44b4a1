// Upload page: show upload progress for large files (the form still works without this).
(function () {
  "use strict";
  var form = document.getElementById("upload-form");
  var bar = document.getElementById("upload-progress");
  if (!form || !bar || !window.XMLHttpRequest) { return; }
  var clicked = null;
  form.querySelectorAll("button[type=submit]").forEach(function (b) {
    b.addEventListener("click", function () { clicked = b; });
  });
  form.addEventListener("submit", function (ev) {
    var input = form.querySelector("input[type=file]");
    var total = 0;
    if (input && input.files) { for (var i = 0; i < input.files.length; i++) { total += input.files[i].size; } }
    if (total < 2000000) { return; } // small uploads: plain form post
    ev.preventDefault();
    var data = new FormData(form);
    if (clicked) { data.append(clicked.name, clicked.value); }
    var xhr = new XMLHttpRequest();
    xhr.open("POST", form.action || window.location.href);
    bar.hidden = false;
    xhr.upload.addEventListener("progress", function (e) {
      if (e.lengthComputable) { bar.value = Math.round(100 * e.loaded / e.total); }
    });
    xhr.addEventListener("load", function () {
      document.open(); document.write(xhr.responseText); document.close();
    });
    xhr.send(data);
  });
})();
