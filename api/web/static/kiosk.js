// The kiosk's only script. The page works without it: the search form and
// the page links ask the server, which filters and pages the shelf. With
// it, a search applies as you type, the page keeps itself current, and in
// wall mode it shows what fits the screen whole and turns the pages by
// itself, pausing while someone touches it. A lost server or network
// leaves the last page up with a notice, and it carries on once back.
(function () {
  'use strict';

  var main = document.getElementById('shelf');
  var form = document.getElementById('shelf-search');
  var head = document.getElementById('kiosk-head');
  if (!main || !form || !head) {
    return;
  }
  var input = form.querySelector('input[name="q"]');
  var kindSelect = form.querySelector('select[name="kind"]');
  var stateLine = document.getElementById('shelf-state');
  var pausedLine = document.getElementById('shelf-paused');
  // A wall's address opened on a screen too small for a wall (a phone)
  // behaves as the ordinary page; site.css asks the same question.
  var wallScreen = window.matchMedia('(min-width: 48em) and (min-height: 32em)');
  var wall = main.getAttribute('data-wall') === '1' && wallScreen.matches;
  var refreshMs = Number(main.getAttribute('data-refresh-ms')) || 15000;
  var everyMs = Number(main.getAttribute('data-every-ms')) || 12000;
  var idleMs = Number(main.getAttribute('data-idle-ms')) || 60000;
  // The address of the page on show, as a reload would ask for it.
  var current = window.location.pathname + window.location.search;
  // A wall screen goes back to the filter it was set up with when left
  // alone, so a passer-by's search does not stay up for the day.
  var setUp = current;
  var failures = 0;

  // Keep focus from scrolling under the sticky header (site.css).
  function measureHead() {
    document.documentElement.style.setProperty('--head-h', head.offsetHeight + 'px');
  }
  if (window.ResizeObserver) {
    new ResizeObserver(measureHead).observe(head);
  }
  measureHead();

  function showState(text) {
    if (stateLine.textContent !== text) {
      stateLine.textContent = text;
    }
    stateLine.hidden = text === '';
  }

  function withParams(change) {
    var url = new URL(current, window.location.href);
    change(url.searchParams);
    return url.pathname + url.search;
  }

  // The address the form asks for, from the first page.
  function formAddress() {
    return withParams(function (params) {
      params.delete('after');
      var q = input.value.trim();
      if (q) { params.set('q', q); } else { params.delete('q'); }
      if (kindSelect.value) { params.set('kind', kindSelect.value); } else { params.delete('kind'); }
    });
  }

  // Swap in what a fresh copy of the page shows, keeping every card whose
  // content is unchanged as the same element, so nothing flickers and the
  // keyboard focus stays where it was.
  function adopt(fresh) {
    var list = document.getElementById('shelf-list');
    var freshList = fresh.getElementById('shelf-list');
    var freshMain = fresh.getElementById('shelf');
    if (!list || !freshList || !freshMain) {
      throw new Error('not a shelf page');
    }
    var focused = list.contains(document.activeElement) ? document.activeElement : null;
    // The same cards in the same order: nothing to move. Moving them
    // anyway, on every refresh of a wall screen, would churn the page.
    var keys = function (parent) {
      return Array.prototype.map.call(parent.children, function (child) {
        return child.getAttribute('data-rev') || child.outerHTML;
      }).join('\n');
    };
    if (keys(list) === keys(freshList)) {
      var mine = list.querySelectorAll('li.card');
      freshList.querySelectorAll('li.card').forEach(function (card, i) {
        mine[i].setAttribute('data-after', card.getAttribute('data-after'));
      });
    } else {
      replaceCards(list, freshList, focused);
    }
    ['data-first', 'data-last', 'data-total'].forEach(function (name) {
      main.setAttribute(name, freshMain.getAttribute(name));
    });
    ['shelf-count', 'shelf-pager', 'no-match'].forEach(function (id) {
      var mine = document.getElementById(id);
      var theirs = fresh.getElementById(id);
      if (mine && theirs && mine.innerHTML !== theirs.innerHTML) {
        mine.innerHTML = theirs.innerHTML;
      }
      if (mine && theirs) {
        mine.hidden = theirs.hidden;
      }
    });
    // The kinds' counts follow the search; the choice stays the user's.
    var freshKinds = fresh.querySelector('select[name="kind"]');
    if (freshKinds && freshKinds.innerHTML !== kindSelect.innerHTML && document.activeElement !== kindSelect) {
      var chosen = kindSelect.value;
      kindSelect.innerHTML = freshKinds.innerHTML;
      kindSelect.value = chosen;
    }
  }

  // replaceCards shows freshList's cards, keeping every card whose content
  // is unchanged as the same element, so nothing flickers and the keyboard
  // focus stays where it was.
  function replaceCards(list, freshList, focused) {
    var old = new Map();
    list.querySelectorAll('li.card').forEach(function (card) {
      old.set(card.getAttribute('data-rev'), card);
    });
    var next = document.importNode(freshList, true);
    next.querySelectorAll('li.card').forEach(function (card) {
      var same = old.get(card.getAttribute('data-rev'));
      if (same) {
        same.setAttribute('data-after', card.getAttribute('data-after'));
        same.hidden = false;
        card.replaceWith(same);
      }
    });
    list.replaceChildren.apply(list, Array.prototype.slice.call(next.childNodes));
    if (focused !== null && focused.isConnected && !focused.closest('[hidden]')) {
      focused.focus();
    }
  }

  // load asks the server for a page of the shelf and shows it. While the
  // server or the network is away the page on show stays, with a notice.
  // Only the newest load may change the page: a refresh of the old
  // address that answers after a search must not undo the search.
  var loads = 0;
  function load(address) {
    var ticket = ++loads;
    return fetch(address, { headers: { Accept: 'text/html' }, cache: 'no-store' })
      .then(function (res) {
        if (!res.ok) { throw new Error('shelf page ' + res.status); }
        return res.text();
      })
      .then(function (html) {
        if (ticket !== loads) { return false; }
        adopt(new DOMParser().parseFromString(html, 'text/html'));
        current = address;
        failures = 0;
        showState('');
        main.setAttribute('data-checked', new Date().toISOString());
        return true;
      })
      .catch(function () {
        if (ticket !== loads) { return false; }
        failures++;
        showState('Cannot reach the shelf: the figures shown may be stale. Trying again.');
        return false;
      });
  }

  // filterOf names what an address filters by, whatever its page.
  function filterOf(address) {
    var params = new URL(address, window.location.href).searchParams;
    return ['q', 'kind', 'bin'].map(function (name) { return params.get(name) || ''; }).join('\n');
  }

  function remember() {
    window.history.replaceState(null, '', current);
  }

  var typing = 0;
  function searchNow() {
    window.clearTimeout(typing);
    var address = formAddress();
    return load(address).then(function (ok) {
      if (ok) {
        remember();
        fit();
      }
    });
  }
  input.addEventListener('input', function () {
    window.clearTimeout(typing);
    typing = window.setTimeout(searchNow, 300);
  });
  kindSelect.addEventListener('change', searchNow);
  form.addEventListener('submit', function (event) {
    event.preventDefault();
    searchNow();
  });

  // ---------- the ordinary page: keep it current ----------
  function refresh() {
    load(current).then(function () {
      window.setTimeout(refresh, failures ? Math.min(refreshMs, 5000) : refreshMs);
    });
  }

  // ---------- the wall: fit, turn, pause ----------
  // shown is how many cards are on the screen; perScreen how many fit a
  // full screen, which the last, shorter screen does not tell.
  var shown = 0;
  var perScreen = 0;

  // fit shows the cards that fit the screen whole and hides the rest, so
  // no part is cut off at the foot.
  function fit() {
    if (!wall) {
      return;
    }
    var cards = Array.prototype.slice.call(document.querySelectorAll('#shelf-list li.card'));
    cards.forEach(function (card) { card.hidden = false; });
    var bottom = main.getBoundingClientRect().bottom;
    var right = main.getBoundingClientRect().right;
    var cut = false;
    shown = 0;
    cards.forEach(function (card) {
      var box = card.getBoundingClientRect();
      cut = cut || box.bottom > bottom + 0.5 || box.right > right + 0.5;
      card.hidden = cut;
      if (!cut) { shown++; }
    });
    if (shown === 0 && cards.length > 0) {
      cards[0].hidden = false; // a screen too small for one whole card still shows one
      shown = 1;
    }
    if (cut || shown > perScreen) {
      perScreen = shown;
    }
    showPlace();
  }

  // showPlace says which parts are on the screen, and how far through the
  // shelf the screen is.
  function showPlace() {
    var first = Number(main.getAttribute('data-first')) || 1;
    var total = Number(main.getAttribute('data-total')) || 0;
    var count = document.getElementById('shelf-count');
    var last = first + shown - 1;
    var per = Math.max(perScreen, 1);
    var screens = Math.max(1, Math.ceil(total / per));
    var screen = Math.min(screens, Math.floor((first - 1) / per) + 1);
    var filtered = new URL(current, window.location.href).searchParams;
    var matching = filtered.get('q') || filtered.get('kind') || filtered.get('bin');
    count.textContent = shown === 0 ? 'No parts' + (matching ? ' matching' : ' on the shelf') :
      'Parts ' + first + '–' + last + ' of ' + total + (matching ? ' matching' : '') +
      ' · screen ' + screen + ' of ' + screens;
    main.setAttribute('data-screen', String(screen));
    main.setAttribute('data-screens', String(screens));
    var done = document.getElementById('shelf-cycle-done');
    if (done) {
      done.style.width = (total ? Math.round(100 * Math.min(last, total) / total) : 0) + '%';
    }
  }

  // The next screen starts after the last part on this one; after the
  // last part of the shelf, the cycle starts again.
  function nextAddress() {
    var visible = document.querySelectorAll('#shelf-list li.card:not([hidden])');
    var first = Number(main.getAttribute('data-first')) || 1;
    var total = Number(main.getAttribute('data-total')) || 0;
    var after = visible.length ? visible[visible.length - 1].getAttribute('data-after') : '';
    // Ask for half a screen more than fits: cards differ in height.
    var limit = Math.max(1, Math.ceil(Math.max(perScreen, shown) * 1.5));
    return withParams(function (params) {
      if (after && first + visible.length - 1 < total) {
        params.set('after', after);
      } else {
        params.delete('after');
      }
      params.set('limit', String(Math.min(limit, 100)));
    });
  }

  var paused = false;
  var idleTimer = 0;
  var turnTimer = 0;

  function scheduleTurn() {
    window.clearTimeout(turnTimer);
    // Retry sooner while the server is away, never faster than a second.
    var wait = failures ? Math.max(1000, Math.min(everyMs, 5000)) : everyMs;
    turnTimer = window.setTimeout(turn, wait);
  }

  function turn() {
    if (paused) {
      return;
    }
    var address = failures ? current : nextAddress();
    load(address).then(function (ok) {
      if (ok) { fit(); }
      if (!paused) { scheduleTurn(); }
    });
  }

  function pause() {
    if (!paused) {
      paused = true;
      window.clearTimeout(turnTimer);
      main.setAttribute('data-paused', '1');
      pausedLine.textContent = 'Paused while you look: the pages turn again after ' +
        Math.round(idleMs / 1000) + ' s untouched.';
      pausedLine.hidden = false;
    }
    window.clearTimeout(idleTimer);
    idleTimer = window.setTimeout(resume, idleMs);
  }

  function resume() {
    paused = false;
    main.setAttribute('data-paused', '0');
    pausedLine.hidden = true;
    if (document.activeElement && document.activeElement !== document.body) {
      document.activeElement.blur();
    }
    if (filterOf(current) !== filterOf(setUp)) {
      var back = new URL(setUp, window.location.href).searchParams;
      input.value = back.get('q') || '';
      kindSelect.value = back.get('kind') || '';
      load(setUp).then(function (ok) {
        if (ok) { remember(); fit(); }
        scheduleTurn();
      });
      return;
    }
    scheduleTurn();
  }

  if (wall) {
    document.documentElement.classList.add('paging');
    ['pointerdown', 'keydown', 'wheel', 'touchstart'].forEach(function (name) {
      document.addEventListener(name, pause, { passive: true });
    });
    window.addEventListener('resize', function () {
      perScreen = 0;
      fit();
    });
    // Fit once the codes have their size; the layout does not wait on
    // the images (their size is set), but fonts may still arrive.
    if (document.fonts && document.fonts.ready) {
      document.fonts.ready.then(fit);
    }
    fit();
    main.setAttribute('data-paused', '0');
    scheduleTurn();
  } else {
    window.setTimeout(refresh, refreshMs);
  }
}());
