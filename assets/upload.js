/* ValueSift Data page: each dropped or chosen file goes to the server as the raw body of one request
   (never base64 inside a callback), so the server holds the file once while it reads it. The server's
   answers are handed to the page through the store "data-upload-done"; the page words them. */
(function () {
  "use strict";

  function setProps(id, props) {
    if (window.dash_clientside && window.dash_clientside.set_props) {
      window.dash_clientside.set_props(id, props);
    }
  }

  async function sendAll(files, limit) {
    const max = Number(limit.dataset.maxBytes || "0");
    const path = limit.dataset.path || "/_valuesift/upload";
    const results = [];
    for (let i = 0; i < files.length; i++) {
      const f = files[i];
      if (max && f.size > max) {
        results.push({name: f.name, ok: false, message: f.name + ": the file has " + f.size.toLocaleString("en") +
          " bytes, above the limit of " + max.toLocaleString("en") +
          ". Split the file, or start the server with a larger --max-upload-mb."});
        continue;
      }
      setProps("data-upload-progress", {children: "Sending " + f.name + " (" + (i + 1) + " of " + files.length +
        ") and reading it ..."});
      try {
        const resp = await fetch(path, {
          method: "POST", body: f, credentials: "same-origin",
          headers: {"X-ValueSift-Upload": "1", "X-ValueSift-Name": encodeURIComponent(f.name),
                    "X-ValueSift-Kind": window.vsUploadKind || "", "Content-Type": "application/octet-stream"},
        });
        let answer = null;
        try { answer = await resp.json(); } catch (e) { answer = null; }
        results.push(answer || {name: f.name, ok: false, message: f.name + ": the server answered " + resp.status +
          " without a message. Drop the file again; if it happens again, restart the dashboard."});
      } catch (e) {
        results.push({name: f.name, ok: false, message: f.name + ": the file did not reach the server. Check that " +
          "the dashboard is still running, then drop the file again."});
      }
    }
    setProps("data-upload-progress", {children: ""});
    setProps("data-upload-done", {data: {results: results, at: Date.now()}});
  }

  function take(event) {
    const target = event.target;
    const zone = target && target.closest ? target.closest("#data-upload") : null;
    const limit = document.getElementById("data-upload-limit");
    if (!zone || !limit) { return; }
    let files = [];
    if (event.type === "change" && target.files) { files = Array.from(target.files); }
    if (event.type === "drop" && event.dataTransfer) { files = Array.from(event.dataTransfer.files || []); }
    if (!files.length) { return; }
    // ours alone: the framework's component would read the file again, base64-encoded
    event.preventDefault();
    event.stopPropagation();
    event.stopImmediatePropagation();
    if (event.type === "change") { target.value = ""; }
    zone.classList.remove("vs-upload-active");
    sendAll(files, limit);
  }

  document.addEventListener("change", take, true);
  document.addEventListener("drop", take, true);
})();
