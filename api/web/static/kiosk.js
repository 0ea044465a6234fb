// The kiosk's only script. The page works without it (the search form
// asks the server); with it the filter applies as you type, and the shelf
// is checked for changes every few seconds. A change swaps in the fresh
// list, keeping every card whose content is unchanged as the same element,
// so nothing flickers and the search box is never touched.
(function () {
  'use strict';

  var main = document.getElementById('shelf');
  var form = document.getElementById('shelf-search');
  if (!main || !form) {
    return;
  }
  var input = form.querySelector('input[name="q"]');
  var kindField = form.querySelector('input[type="hidden"][name="kind"]');
  var countLine = document.getElementById('shelf-count');
  var stateLine = document.getElementById('shelf-state');
  var noMatch = document.getElementById('no-match');
  var refreshMs = Number(main.getAttribute('data-refresh-ms')) || 15000;
  var kind = kindField ? kindField.value : '';
  var etag = '';

  function words() {
    return input.value.toLowerCase().split(/\s+/).filter(function (w) { return w !== ''; });
  }

  // The same test the server applies when the page is loaded with ?q=.
  function applyFilter() {
    var ws = words();
    var shown = 0;
    var total = 0;
    document.querySelectorAll('#shelf-list section.bin').forEach(function (bin) {
      var any = false;
      bin.querySelectorAll('li.card').forEach(function (card) {
        total++;
        var text = card.getAttribute('data-search') || '';
        var ok = (kind === '' || card.getAttribute('data-kind') === kind) &&
          ws.every(function (w) { return text.indexOf(w) !== -1; });
        card.hidden = !ok;
        if (ok) {
          shown++;
          any = true;
        }
      });
      bin.hidden = !any;
    });
    document.querySelectorAll('#kind-filter button').forEach(function (b) {
      b.setAttribute('aria-pressed', String(b.getAttribute('data-kind') === kind));
    });
    var text = shown + ' of ' + total + ' components shown';
    if (countLine.textContent !== text) {
      countLine.textContent = text;
    }
    noMatch.textContent = total === 0 ? 'The shelf is empty.' : 'Nothing on the shelf matches this search.';
    noMatch.hidden = shown !== 0;
  }

  // Keep the address in step with the filter, so a reload shows the same.
  function remember() {
    var params = new URLSearchParams(window.location.search);
    if (input.value) { params.set('q', input.value); } else { params.delete('q'); }
    if (kind) { params.set('kind', kind); } else { params.delete('kind'); }
    var query = params.toString();
    window.history.replaceState(null, '', window.location.pathname + (query ? '?' + query : ''));
  }

  input.addEventListener('input', function () {
    applyFilter();
    remember();
  });
  form.addEventListener('submit', function (event) {
    event.preventDefault();
    var button = event.submitter;
    if (button && button.hasAttribute('data-kind')) {
      kind = button.getAttribute('data-kind');
      if (kindField) { kindField.value = kind; }
    }
    applyFilter();
    remember();
  });

  function adoptKinds(fresh) {
    var bar = document.getElementById('kind-filter');
    var freshBar = fresh.getElementById('kind-filter');
    if (!bar || !freshBar || bar.innerHTML === freshBar.innerHTML) {
      return;
    }
    var focused = document.activeElement && bar.contains(document.activeElement) ?
      document.activeElement.getAttribute('data-kind') : null;
    bar.replaceChildren.apply(bar, Array.prototype.map.call(freshBar.childNodes, function (n) {
      return document.importNode(n, true);
    }));
    if (focused !== null) {
      var again = bar.querySelector('button[data-kind="' + CSS.escape(focused) + '"]');
      if (again) { again.focus(); }
    }
  }

  // Swap in the list from a fresh copy of this page, reusing unchanged cards.
  function adoptList(fresh) {
    var list = document.getElementById('shelf-list');
    var freshList = fresh.getElementById('shelf-list');
    if (!list || !freshList) {
      return;
    }
    // Taking a card out of the page, even to put it straight back, drops
    // the keyboard focus; give it back to the element that held it.
    var focused = list.contains(document.activeElement) ? document.activeElement : null;
    var old = new Map();
    list.querySelectorAll('li.card').forEach(function (card) {
      old.set(card.getAttribute('data-rev'), card);
    });
    var next = document.importNode(freshList, true);
    next.querySelectorAll('li.card').forEach(function (card) {
      var same = old.get(card.getAttribute('data-rev'));
      if (same) {
        card.replaceWith(same);
      }
    });
    list.replaceChildren.apply(list, Array.prototype.slice.call(next.childNodes));
    if (focused !== null && focused.isConnected) {
      focused.focus();
    }
  }

  function showState(text) {
    stateLine.textContent = text;
    stateLine.hidden = text === '';
  }

  function refresh() {
    return fetch('/shelf', { headers: { Accept: 'text/html' }, cache: 'no-store' })
      .then(function (res) {
        if (!res.ok) { throw new Error('shelf page ' + res.status); }
        return res.text();
      })
      .then(function (html) {
        var fresh = new DOMParser().parseFromString(html, 'text/html');
        adoptKinds(fresh);
        adoptList(fresh);
        applyFilter();
      });
  }

  // Ask the shelf API whether anything changed; a 304 costs no body.
  function poll() {
    var headers = etag ? { 'If-None-Match': etag } : {};
    fetch('/v1/shelf', { headers: headers, cache: 'no-store' })
      .then(function (res) {
        if (res.status === 304) {
          return null;
        }
        if (!res.ok) { throw new Error('shelf ' + res.status); }
        var tag = res.headers.get('ETag') || '';
        return refresh().then(function () { etag = tag; });
      })
      .then(function () {
        showState('');
        main.setAttribute('data-checked', new Date().toISOString());
      })
      .catch(function () {
        showState('Cannot reach the shelf right now; showing what was here before.');
      })
      .then(function () {
        window.setTimeout(poll, refreshMs);
      });
  }

  applyFilter();
  poll();
}());
