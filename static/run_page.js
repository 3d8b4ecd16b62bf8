// The open run page at the bench: one tap logs a set, each value stamped with the moment its
// field was filled in (elapsed run time against the server's clock); entries wait in the
// browser's storage while the network is away and are sent in order when it answers; the page
// follows the run live over server-sent events and counts down between updates.
// Works on plain http: no service worker, no crypto.randomUUID.
(function () {
  "use strict";

  var form = document.getElementById("entry-set");
  var markForm = document.getElementById("mark-form");
  var live = document.getElementById("live");

  // ----- the clock: elapsed run time from the server's clock and the phone's monotonic one
  var perf0 = performance.now();
  var wall0 = Date.now();
  var serverMsAtOrigin = form ? Number(form.getAttribute("data-server-ms")) : wall0;
  var startedS = form ? Number(form.getAttribute("data-started-s")) : 0;

  // Milliseconds since the page loaded. The monotonic clock is immune to a phone whose clock is
  // wrong or is set while the page is open; some browsers pause it while the phone sleeps, so a
  // wall clock that ran clearly further (a sleep) wins.
  function ranMs() {
    var byPerf = performance.now() - perf0;
    var byWall = Date.now() - wall0;
    return byWall - byPerf > 2000 ? byWall : byPerf;
  }
  function elapsedS() {
    return (serverMsAtOrigin + ranMs()) / 1000 - startedS;
  }
  // An answer carries the server's clock: take it as read halfway through the round trip.
  function resync(serverMs, sentRan) {
    if (!serverMs) return;
    var mid = (sentRan + ranMs()) / 2;
    serverMsAtOrigin = serverMs - mid;
  }

  function minutesSeconds(s) {
    var total = Math.max(0, Math.round(s));
    var h = Math.floor(total / 3600), m = Math.floor(total / 60) % 60, sec = total % 60;
    var mm = h > 0 ? (m < 10 ? "0" : "") + m : String(m);
    return (h > 0 ? h + ":" : "") + mm + ":" + (sec < 10 ? "0" : "") + sec;
  }

  // Ids made on the phone; getRandomValues works in insecure contexts, randomUUID does not.
  function newId() {
    var bytes = new Uint8Array(8);
    var c = window.crypto || window.msCrypto;
    if (c && c.getRandomValues) {
      c.getRandomValues(bytes);
    } else {
      for (var i = 0; i < bytes.length; i++) bytes[i] = Math.floor(Math.random() * 256);
    }
    var hex = "";
    for (var j = 0; j < bytes.length; j++) hex += (bytes[j] + 256).toString(16).slice(1);
    return Date.now().toString(36) + "-" + hex;
  }

  // ----- the queue, kept in localStorage so it survives a reload and a sleeping phone
  var runId = (form || live || document.body).getAttribute("data-run") || location.pathname;
  var queueKey = "eddybench:queue:" + runId;
  var refusedKey = "eddybench:refused:" + runId;

  function load(key) {
    try {
      return JSON.parse(localStorage.getItem(key) || "[]");
    } catch (e) {
      return [];
    }
  }
  function save(key, items) {
    try {
      localStorage.setItem(key, JSON.stringify(items));
    } catch (e) {
      say("this browser cannot keep entries; they are sent now but lost if the page closes");
    }
  }

  var confirmLine = document.getElementById("entry-confirm");
  var queueLine = document.getElementById("entry-queue");
  var refusedList = document.getElementById("entry-refused");

  function say(text) {
    if (!confirmLine) return;
    confirmLine.textContent = text;
    confirmLine.hidden = !text;
  }

  function showQueue() {
    if (!queueLine) return;
    var n = load(queueKey).length;
    queueLine.textContent = n ? "waiting to send (" + n + ")" : "";
    queueLine.hidden = n === 0;
  }

  function describe(item) {
    if (item.kind === "mark") return "mark \u201c" + item.summary + "\u201d";
    return item.summary;
  }

  function showRefused() {
    if (!refusedList) return;
    var items = load(refusedKey);
    refusedList.textContent = "";
    refusedList.hidden = items.length === 0;
    items.forEach(function (item, at) {
      var li = document.createElement("li");
      li.className = "error";
      li.textContent = "Not logged: " + describe(item) + " \u2014 " + item.reason + " ";
      var dismiss = document.createElement("button");
      dismiss.type = "button";
      dismiss.textContent = "dismiss";
      dismiss.addEventListener("click", function () {
        var left = load(refusedKey);
        left.splice(at, 1);
        save(refusedKey, left);
        showRefused();
      });
      li.appendChild(dismiss);
      refusedList.appendChild(li);
    });
  }

  function csrfToken() {
    var field = document.querySelector("input[name=csrf]");
    return field ? field.value : "";
  }

  var sending = false;
  var retryMs = 2000;
  var retryTimer = null;

  function later() {
    if (retryTimer) return;
    retryTimer = setTimeout(function () {
      retryTimer = null;
      flush();
    }, retryMs);
    retryMs = Math.min(retryMs * 2, 30000);
  }

  // Sends the queue in order, one entry at a time; stops at the first that cannot be sent.
  function flush() {
    if (sending) return;
    var queue = load(queueKey);
    if (!queue.length) {
      showQueue();
      return;
    }
    sending = true;
    var item = queue[0];
    var body = new URLSearchParams();
    body.append("csrf", csrfToken());
    item.fields.forEach(function (pair) {
      body.append(pair[0], pair[1]);
    });
    var sentRan = ranMs();
    fetch(item.path, {
      method: "POST",
      credentials: "same-origin",
      headers: { Accept: "application/json" },
      body: body
    })
      .then(function (response) {
        return response
          .json()
          .catch(function () {
            return {};
          })
          .then(function (answer) {
            return { status: response.status, answer: answer };
          });
      })
      .then(function (result) {
        sending = false;
        var status = result.status, answer = result.answer;
        if (status >= 500 || status === 401 || status === 403 || status === 408 || status === 429) {
          // The server is not taking entries now (or wants a fresh sign-in): keep waiting.
          showQueue();
          if (status === 401 || status === 403) say("sign in again (in another tab) to send the waiting entries");
          later();
          return;
        }
        resync(answer.server_ms, sentRan);
        var rest = load(queueKey).filter(function (q) {
          return q.key !== item.key;
        });
        save(queueKey, rest);
        if (status >= 200 && status < 300) {
          if (item.kind === "mark") say("marked \u201c" + answer.marked + "\u201d at " + answer.at);
          else say("logged " + (answer.logged + answer.already_stored) + " at " + answer.at);
        } else {
          refuse(item, answer);
        }
        retryMs = 2000;
        showQueue();
        flush();
      })
      .catch(function () {
        sending = false;
        showQueue();
        setLive(false);
        later();
      });
  }

  // A refused entry is kept with its reason; a set the user has not replaced goes back into the
  // form with its fields marked.
  function refuse(item, answer) {
    var reasons = (answer.errors || []).map(function (e) {
      return e.message;
    });
    if (answer.error) reasons.push(answer.error);
    item.reason = reasons.join("; ") || "the server refused it";
    var refused = load(refusedKey);
    refused.push(item);
    save(refusedKey, refused);
    showRefused();
    if (item.kind === "set" && form && emptyForm()) {
      item.fields.forEach(function (pair) {
        if (pair[0].indexOf("value.") !== 0) return;
        var input = form.elements[pair[0]];
        if (input) input.value = pair[1];
      });
      (answer.errors || []).forEach(function (e) {
        var input = form.elements["value." + e.field];
        if (input) {
          input.setAttribute("aria-invalid", "true");
          input.classList.add("invalid");
        }
      });
      say("");
    }
  }

  function valueInputs() {
    return form ? Array.prototype.slice.call(form.querySelectorAll("input[name^='value.']")) : [];
  }
  function emptyForm() {
    return valueInputs().every(function (input) {
      return !input.value.trim();
    });
  }

  function enqueue(item) {
    var queue = load(queueKey);
    queue.push(item);
    save(queueKey, queue);
    showQueue();
    flush();
  }

  if (form) {
    var inputs = valueInputs();
    inputs.forEach(function (input, at) {
      // The moment a field is filled in is the moment its value was read.
      input.addEventListener("input", function () {
        if (!input.value.trim()) {
          input.removeAttribute("data-at");
        } else if (!input.hasAttribute("data-at")) {
          input.setAttribute("data-at", elapsedS().toFixed(2));
        }
        input.removeAttribute("aria-invalid");
        input.classList.remove("invalid");
      });
      // The keyboard's Enter moves to the next field; on the last it logs the set.
      input.addEventListener("keydown", function (event) {
        if (event.key === "Enter" && at < inputs.length - 1) {
          event.preventDefault();
          inputs[at + 1].focus();
        }
      });
    });
    form.addEventListener("submit", function (event) {
      event.preventDefault();
      var fields = [];
      var shown = [];
      var typedTime = form.elements.time ? form.elements.time.value.trim() : "";
      inputs.forEach(function (input) {
        var value = input.value.trim();
        if (!value) return;
        var channel = input.name.slice("value.".length);
        var at = input.getAttribute("data-at") || elapsedS().toFixed(2);
        fields.push(["value." + channel, value], ["at." + channel, at], ["id." + channel, newId()]);
        shown.push(value);
      });
      if (!shown.length) {
        say("type at least one value");
        return;
      }
      if (typedTime) fields.push(["time", typedTime]);
      enqueue({
        key: newId(),
        kind: "set",
        path: form.getAttribute("action"),
        fields: fields,
        summary: shown.join(", ")
      });
      inputs.forEach(function (input) {
        input.value = "";
        input.removeAttribute("data-at");
      });
      if (form.elements.time) form.elements.time.value = "";
      if (inputs.length) inputs[0].focus();
    });
  }

  if (markForm) {
    markForm.addEventListener("submit", function (event) {
      event.preventDefault();
      var text = markForm.elements.text.value.trim();
      if (!text) return;
      enqueue({
        key: newId(),
        kind: "mark",
        path: markForm.getAttribute("action"),
        fields: [["text", text], ["at", elapsedS().toFixed(2)], ["id", newId()]],
        summary: text
      });
      markForm.elements.text.value = "";
    });
  }

  window.addEventListener("online", flush);
  document.addEventListener("visibilitychange", function () {
    if (!document.hidden) flush();
  });
  showQueue();
  showRefused();
  flush();

  // ----- the live stream and the countdowns
  var status = document.getElementById("live-status");
  function setLive(on) {
    if (!status) return;
    status.hidden = false;
    status.textContent = on ? "live" : "not live \u2014 reconnecting";
    status.className = "live-status " + (on ? "on" : "off");
  }

  function stampCountdowns() {
    var now = performance.now();
    Array.prototype.forEach.call(document.querySelectorAll(".countdown[data-seconds-to-limit]"), function (el) {
      if (!el.hasAttribute("data-from")) el.setAttribute("data-from", String(now));
    });
  }
  function tick() {
    var now = performance.now();
    Array.prototype.forEach.call(document.querySelectorAll(".countdown[data-seconds-to-limit]"), function (el) {
      var total = Number(el.getAttribute("data-seconds-to-limit"));
      if (!el.getAttribute("data-seconds-to-limit") || !isFinite(total)) return;
      var left = total - (now - Number(el.getAttribute("data-from"))) / 1000;
      el.textContent = left <= 0 ? "AT OR OVER ITS LIMIT" : "limit in about " + minutesSeconds(left);
    });
  }

  function cell(text) {
    var td = document.createElement("td");
    td.textContent = text;
    return td;
  }

  var onFirstPage = !/[?&]page=([2-9]|\d\d)/.test(location.search);

  function addRow(id, time, title, value, isMark) {
    var table = document.getElementById("readings-table");
    if (!table || !onFirstPage || document.getElementById(id)) return;
    var tr = document.createElement("tr");
    tr.id = id;
    if (isMark) tr.className = "mark";
    tr.appendChild(cell(time));
    tr.appendChild(cell(title));
    var td = document.createElement("td");
    var span = document.createElement("span");
    span.className = isMark ? "" : "value";
    span.textContent = value;
    td.appendChild(span);
    tr.appendChild(td);
    var body = table.tBodies[0];
    body.insertBefore(tr, body.firstChild);
    table.hidden = false;
    var none = document.getElementById("no-readings");
    if (none) none.hidden = true;
  }

  function showLive(rows) {
    var list = document.getElementById("live-rows");
    if (!list) return;
    list.textContent = "";
    var now = String(performance.now());
    rows.forEach(function (m) {
      var li = document.createElement("li");
      li.className = "row live " + m.severity;
      var strong = document.createElement("strong");
      strong.textContent = m.title;
      var numbers = document.createElement("span");
      numbers.className = "now";
      numbers.textContent = m.now + " \u00b7 " + m.margin;
      var countdown = document.createElement("span");
      countdown.className = "countdown";
      countdown.setAttribute("data-seconds-to-limit", m.seconds_to_limit);
      countdown.setAttribute("data-from", now);
      countdown.textContent = m.countdown;
      li.appendChild(strong);
      li.appendChild(document.createTextNode(" "));
      li.appendChild(numbers);
      li.appendChild(document.createTextNode(" "));
      li.appendChild(countdown);
      list.appendChild(li);
    });
    var empty = document.getElementById("live-empty");
    if (empty) empty.hidden = rows.length > 0;
  }

  function applyUpdate(update) {
    if (update.missed_some || !update.open) {
      location.reload();
      return;
    }
    update.readings.forEach(function (r) {
      if (r.corrects) {
        var old = document.getElementById("reading-" + r.corrects);
        if (old) old.parentNode.removeChild(old);
      }
      addRow("reading-" + r.id, r.time, r.title, r.value, false);
    });
    update.marks.forEach(function (m) {
      addRow("mark-" + m.id, m.time, "Mark", m.text, true);
    });
    var count = document.getElementById("reading-count");
    if (count) count.textContent = String(update.reading_count);
    showLive(update.live);
  }

  if (live && window.EventSource) {
    var url = live.getAttribute("data-events");
    var after = live.getAttribute("data-last-reading") || "0";
    var source = new EventSource(url + "?after=" + encodeURIComponent(after));
    source.addEventListener("open", function () {
      setLive(true);
      flush();
    });
    source.addEventListener("error", function () {
      setLive(false);
    });
    source.addEventListener("run", function (event) {
      setLive(true);
      try {
        applyUpdate(JSON.parse(event.data));
      } catch (e) {
        // A malformed update is skipped; the next one carries the state again.
      }
    });
  }
  stampCountdowns();
  setInterval(tick, 1000);
})();
