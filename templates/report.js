/* plumbline report script. The page is complete without it; the script only adds
   filters, keyboard steps between findings (j / k), and reviewer decisions kept while the
   page is open and offered as a JSON Lines file for --accept. It reads everything from
   the DOM and its data- attributes; no report text is ever part of this script. With
   the fragment #selftest it exercises itself and writes the results, as JSON, into the
   body's data-selftest attribute, for the browser test. */
(function () {
  'use strict';
  var doc = document;
  var tools = doc.getElementById('tools');
  var form = doc.getElementById('filters');
  if (!tools || !form) { return; }
  var answers = Array.prototype.slice.call(doc.querySelectorAll('article.ans'));
  var shown = doc.getElementById('shown');
  var reviewer = doc.getElementById('reviewer');
  var countLine = doc.getElementById('decision-count');
  var link = doc.getElementById('download');
  var preview = doc.getElementById('decision-preview');
  tools.hidden = false;

  // Text of each answer for the text filter, built at the first text search (the
  // script's own controls, class ctl, are left out).
  var texts = null;
  function textOf(root) {
    var walker = doc.createTreeWalker(root, NodeFilter.SHOW_ELEMENT | NodeFilter.SHOW_TEXT, {
      acceptNode: function (n) {
        return n.nodeType === 1 && n.classList.contains('ctl') ?
          NodeFilter.FILTER_REJECT : NodeFilter.FILTER_ACCEPT;
      }
    });
    var parts = [];
    while (walker.nextNode()) {
      if (walker.currentNode.nodeType === 3) { parts.push(walker.currentNode.data); }
    }
    return parts.join('').toLowerCase();
  }

  function has(el, attr, token) {
    return (' ' + (el.getAttribute(attr) || '') + ' ').indexOf(' ' + token + ' ') >= 0;
  }

  function apply() {
    var verdict = form.elements.verdict.value;
    var flag = form.elements.flag.value;
    var status = form.elements.status.value;
    var user = form.elements.user.value;
    var q = form.elements.q.value.trim().toLowerCase();
    var failing = form.elements.failing.checked;
    var n = 0;
    if (q && !texts) { texts = answers.map(textOf); }
    answers.forEach(function (a, i) {
      var ok = (!verdict || has(a, 'data-v', verdict)) &&
        (!flag || has(a, 'data-f', flag)) &&
        (!status || has(a, 'data-c', status)) &&
        (!user || a.getAttribute('data-u') === user) &&
        (!failing || a.getAttribute('data-pass') === '0') &&
        (!q || texts[i].indexOf(q) >= 0);
      if (a.hidden === ok) { a.hidden = !ok; }
      if (ok) { n += 1; }
    });
    shown.textContent = 'Showing ' + n + ' of ' + answers.length + ' answers.';
    return n;
  }
  form.addEventListener('input', apply);
  form.addEventListener('change', apply);
  form.addEventListener('submit', function (e) { e.preventDefault(); });
  form.addEventListener('reset', function () { window.setTimeout(apply, 0); });
  shown.textContent = 'Showing all ' + answers.length + ' answers.';

  // Keyboard: j and k step through the findings of the answers shown.
  function step(delta) {
    var list = Array.prototype.slice.call(
      doc.querySelectorAll('article.ans:not([hidden]) li.finding'));
    if (list.length === 0) { return null; }
    var here = doc.activeElement && doc.activeElement.closest ?
      doc.activeElement.closest('li.finding') : null;
    var at = here ? list.indexOf(here) : -1;
    var next = at < 0 ? (delta > 0 ? 0 : list.length - 1) :
      Math.max(0, Math.min(list.length - 1, at + delta));
    var el = list[next];
    el.tabIndex = -1;
    el.focus({ preventScroll: true });
    el.scrollIntoView({ block: 'center' });
    return el;
  }
  doc.addEventListener('keydown', function (e) {
    if (e.altKey || e.ctrlKey || e.metaKey) { return; }
    var t = e.target;
    if (t && /^(INPUT|SELECT|TEXTAREA|BUTTON)$/.test(t.tagName || '')) { return; }
    if (e.key === 'j') { step(1); e.preventDefault(); }
    else if (e.key === 'k') { step(-1); e.preventDefault(); }
    else if (e.key === '/') { form.elements.q.focus(); e.preventDefault(); }
  });

  // Reviewer decisions, in the format of the --accept file (src/decisions.rs).
  var decisions = [];
  var url = null;

  function decisionFor(li, by, note) {
    var d = { answer: li.closest('article.ans').getAttribute('data-id') };
    var sentence = li.getAttribute('data-sentence');
    if (sentence !== null) { d.sentence = Number(sentence); }
    var ref = li.getAttribute('data-ref');
    if (ref !== null) { d.ref = ref; }
    d.finding = li.getAttribute('data-kind');
    d.by = by;
    d.note = note;
    return d;
  }
  function keyOf(d) { return JSON.stringify([d.answer, d.finding, d.sentence, d.ref]); }

  function fileText() {
    return decisions.map(function (x) { return JSON.stringify(x.d) + '\n'; }).join('');
  }
  function refresh() {
    var text = fileText();
    if (url) { URL.revokeObjectURL(url); url = null; }
    if (decisions.length) {
      url = URL.createObjectURL(new Blob([text], { type: 'application/x-ndjson' }));
      link.href = url;
      link.hidden = false;
      preview.hidden = false;
    } else {
      link.removeAttribute('href');
      link.hidden = true;
      preview.hidden = true;
    }
    preview.textContent = text;
    countLine.textContent = decisions.length === 0 ? 'No decisions yet.' :
      decisions.length + (decisions.length === 1 ? ' decision' : ' decisions') + ' recorded on this page.';
  }

  function el(tag, cls, text) {
    var e = doc.createElement(tag);
    if (cls) { e.className = cls; }
    if (text) { e.textContent = text; }
    return e;
  }

  function openForm(li) {
    if (li.querySelector('.ctl-form')) { return li.querySelector('.ctl-form'); }
    var box = el('span', 'ctl ctl-form');
    var label = el('label', '', 'Note ');
    var note = el('input', 'acc-note');
    note.type = 'text';
    label.appendChild(note);
    var save = el('button', 'acc-save', 'Record');
    save.type = 'button';
    var cancel = el('button', 'acc-cancel', 'Cancel');
    cancel.type = 'button';
    var msg = el('span', 'warnmsg');
    msg.setAttribute('role', 'alert');
    box.appendChild(label);
    box.appendChild(save);
    box.appendChild(cancel);
    box.appendChild(msg);
    li.appendChild(box);
    note.focus();
    return box;
  }

  function record(li) {
    var box = li.querySelector('.ctl-form');
    var note = box.querySelector('.acc-note').value.trim();
    var by = reviewer.value.trim();
    var msg = box.querySelector('.warnmsg');
    if (!by) { msg.textContent = ' Give your reviewer id above first.'; return false; }
    if (!note) { msg.textContent = ' A note saying why is required.'; return false; }
    var d = decisionFor(li, by, note);
    var key = keyOf(d);
    // One decision waives every finding it matches; a repeated line would be rejected.
    if (!decisions.some(function (x) { return x.key === key; })) {
      decisions.push({ key: key, d: d });
    }
    box.parentNode.removeChild(box);
    li.querySelector('.acc-btn').hidden = true;
    var done = el('span', 'ctl decided', 'accepted here by ' + by + ': ' + note + ' ');
    var undo = el('button', 'acc-undo', 'Undo');
    undo.type = 'button';
    done.appendChild(undo);
    li.appendChild(done);
    refresh();
    return true;
  }

  function undo(li) {
    var d = decisionFor(li, '', '');
    var key = keyOf(d);
    decisions = decisions.filter(function (x) { return x.key !== key; });
    var done = li.querySelector('.decided');
    if (done) { done.parentNode.removeChild(done); }
    li.querySelector('.acc-btn').hidden = false;
    refresh();
  }

  // An accept button on every finding not yet accepted, added in slices so that a
  // page of many thousands of answers opens at once.
  var pending = Array.prototype.slice.call(doc.querySelectorAll('li.finding:not([data-accepted])'));
  function addButtons(count) {
    pending.splice(0, count).forEach(function (li) {
      var b = el('button', 'ctl acc-btn', 'Accept…');
      b.type = 'button';
      li.appendChild(b);
    });
    if (pending.length) { window.setTimeout(function () { addButtons(500); }, 0); }
  }
  addButtons(500);
  doc.getElementById('answers').addEventListener('click', function (e) {
    var t = e.target;
    if (!t.closest) { return; }
    var li = t.closest('li.finding');
    if (!li) { return; }
    if (t.classList.contains('acc-btn')) { openForm(li); }
    else if (t.classList.contains('acc-save')) { record(li); }
    else if (t.classList.contains('acc-cancel')) {
      var box = li.querySelector('.ctl-form');
      if (box) { box.parentNode.removeChild(box); }
    } else if (t.classList.contains('acc-undo')) { undo(li); }
  });
  refresh();

  // Printing opens folded tables (the charts' text equivalents) too.
  var folded = [];
  window.addEventListener('beforeprint', function () {
    folded = Array.prototype.filter.call(doc.querySelectorAll('details'), function (d) { return !d.open; });
    folded.forEach(function (d) { d.open = true; });
  });
  window.addEventListener('afterprint', function () {
    folded.forEach(function (d) { d.open = false; });
    folded = [];
  });

  function selftest() {
    addButtons(pending.length);
    var r = { answers: answers.length, findings: doc.querySelectorAll('li.finding').length };
    function only(name, value) {
      form.reset();
      if (name) {
        var input = form.elements[name];
        if (input.type === 'checkbox') { input.checked = value; } else { input.value = value; }
      }
      return apply();
    }
    function consistent(attr, token) {
      return answers.every(function (a) { return a.hidden !== has(a, attr, token); });
    }
    function options(name) {
      return Array.prototype.map.call(form.elements[name].options, function (o) { return o.value; })
        .filter(function (v) { return v; });
    }
    r.all = only(null);
    [['verdict', 'data-v'], ['flag', 'data-f'], ['status', 'data-c']].forEach(function (p) {
      r[p[0]] = {};
      options(p[0]).forEach(function (v) {
        r[p[0]][v] = only(p[0], v);
        if (!consistent(p[1], v)) { r[p[0]][v] = 'inconsistent'; }
      });
    });
    var users = options('user');
    if (users.length) {
      r.user = { name: users[0], shown: only('user', users[0]) };
      r.user.consistent = answers.every(function (a) {
        return a.hidden !== (a.getAttribute('data-u') === users[0]);
      });
    }
    r.failing = only('failing', true);
    r.search_nothing = only('q', 'zq-no-such-text-qz');
    r.search_script = only('q', '<script>');
    r.all_again = only(null);

    var keyEvent = function (key) {
      doc.dispatchEvent(new KeyboardEvent('keydown', { key: key, bubbles: true }));
      return doc.activeElement ? doc.activeElement.id : null;
    };
    var first = doc.querySelector('li.finding');
    r.first_finding = first ? first.id : null;
    r.j1 = keyEvent('j');
    r.j2 = keyEvent('j');
    r.k1 = keyEvent('k');

    var open = doc.querySelector('li.finding:not([data-accepted])');
    if (open) {
      open.querySelector('.acc-btn').click();
      reviewer.value = '';
      open.querySelector('.acc-note').value = 'checked by the self-test';
      open.querySelector('.acc-save').click();
      r.refused_without_reviewer = decisions.length === 0;
      reviewer.value = 'selftest-reviewer';
      open.querySelector('.acc-save').click();
      r.decided = open.id;
      r.decisions_file = fileText();
      r.download_ready = !link.hidden && /^blob:/.test(link.href);
    }
    return r;
  }
  if (window.location.hash === '#selftest') {
    var result;
    try { result = selftest(); } catch (e) { result = { error: String(e && e.stack || e) }; }
    doc.body.setAttribute('data-selftest', JSON.stringify(result));
  }
}());
