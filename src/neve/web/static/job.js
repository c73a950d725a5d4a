// neve serve, a portfolio run: poll the job and show its stage, summary and downloads.
// Every text from the server is written with textContent, never as HTML.
(function () {
  "use strict";
  var box = document.getElementById("job");
  if (!box) { return; }
  var id = box.dataset.job;
  var shownFiles = false;
  function show(job) {
    document.getElementById("stage").textContent = job.stage;
    document.getElementById("progress").value = job.progress;
    if (job.status === "error") {
      var err = document.getElementById("job-error");
      err.textContent = job.message;
      err.hidden = false;
      return true;
    }
    if (job.status !== "done") { return false; }
    if (!shownFiles) {
      shownFiles = true;
      var list = document.getElementById("files");
      Object.keys(job.files).forEach(function (name) {
        var li = document.createElement("li");
        var a = document.createElement("a");
        a.href = job.files[name];
        a.textContent = name;
        a.id = "file-" + name.replace(/[^a-z0-9]/gi, "-");
        li.appendChild(a);
        list.appendChild(li);
      });
      document.getElementById("downloads").hidden = false;
      if (job.files["portfolio_map.html"]) {
        document.getElementById("portfolio-map").src = job.files["portfolio_map.html"];
        document.getElementById("map-section").hidden = false;
      }
      var table = document.getElementById("summary-table");
      var s = job.summary || {};
      Object.keys(s).forEach(function (key) {
        var value = s[key];
        if (value === null || typeof value === "object") {
          if (!value || Array.isArray(value) || Object.keys(value).length > 12) { return; }
        }
        var tr = document.createElement("tr");
        var th = document.createElement("th"); th.textContent = key;
        var td = document.createElement("td");
        td.textContent = typeof value === "object" ? Object.keys(value).map(function (k) { return k + ": " + value[k]; }).join(", ") : String(value);
        tr.appendChild(th); tr.appendChild(td); table.appendChild(tr);
      });
      document.getElementById("summary").hidden = false;
      box.dataset.done = "yes";
    }
    return true;
  }
  function poll() {
    fetch("/api/jobs/" + encodeURIComponent(id), { credentials: "same-origin" })
      .then(function (r) { return r.json(); })
      .then(function (job) { if (!show(job)) { setTimeout(poll, 700); } })
      .catch(function () { setTimeout(poll, 2000); });
  }
  poll();
})();
