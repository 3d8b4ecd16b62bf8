// Copy buttons for share links: a button with data-copy="ID" copies the value of the input
// with that id. Without script the buttons stay hidden and the field can be selected by hand.
(function () {
  "use strict";
  function copied(button, text) {
    var status = document.getElementById(button.getAttribute("data-status"));
    if (status) { status.textContent = text; }
  }
  function copy(button) {
    var field = document.getElementById(button.getAttribute("data-copy"));
    if (!field) { return; }
    var done = function () { copied(button, "Copied."); };
    var byHand = function () {
      field.focus();
      field.select();
      try {
        if (document.execCommand("copy")) { done(); return; }
      } catch (e) { /* fall through */ }
      copied(button, "Selected: copy it with your phone's menu.");
    };
    if (navigator.clipboard && window.isSecureContext) {
      navigator.clipboard.writeText(field.value).then(done, byHand);
    } else {
      byHand();
    }
  }
  var buttons = document.querySelectorAll("button[data-copy]");
  for (var i = 0; i < buttons.length; i++) {
    buttons[i].hidden = false;
    buttons[i].addEventListener("click", function (event) { copy(event.currentTarget); });
  }
})();
