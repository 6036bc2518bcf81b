// The what-if page of wearplan serve. Plain JavaScript, no library.
//
// The controls hold the page's changes to the scenario; every change posts
// them all to /api/plan, which answers with the plan in words, the report's
// tables and charts as HTML fragments (drawn on the server by the reports'
// own code), and the figures of a comparison column. Kept alternatives are
// a list in this page. Server fragments go in with innerHTML; everything
// else, including every text a user typed, with textContent.
'use strict';

(() => {
  const $ = (id) => document.getElementById(id);
  const el = (tag, props = {}, ...children) => {
    const e = document.createElement(tag);
    for (const [k, v] of Object.entries(props)) {
      if (k === 'class') e.className = v;
      else if (k === 'text') e.textContent = v;
      else if (k.startsWith('data-') || k.startsWith('aria-')) e.setAttribute(k, v);
      else e[k] = v;
    }
    e.append(...children);
    return e;
  };
  const word = (text) => el('span', { text });
  const whole = new Intl.NumberFormat('en-US', { maximumFractionDigits: 0 });
  // round keeps a percentage typed as 2.5 from showing as 2.5000000000000004.
  const round = (v, digits = 6) => Number(v.toFixed(digits));

  const state = {
    scenarios: [],
    info: null, // the chosen scenario (from /api/scenarios)
    steps: [], // {from, to, kind: 'percent' | 'amount', value}
    pieces: {}, // class name -> piece size typed on the page ('' keeps the file's)
    targets: [], // {who, measure: good|fair|poor|state|index|hold, state, bound: max|min, value, from, to, confidence: '' or percent}
    seq: 0,
    inflight: null,
    timer: 0,
    solves: 0,
    // early counts the plans shown before their funding answers.
    early: 0,
    last: null, // {request, answer}
    kept: [], // {name, request, figures}
  };

  // ---- controls ----------------------------------------------------------

  function years() {
    const out = [];
    for (let y = state.info.start_year; y < state.info.start_year + state.info.horizon; y++) out.push(y);
    return out;
  }

  function yearSelect(value, blank, label) {
    const s = el('select', { 'aria-label': label });
    if (blank) s.append(el('option', { value: '', text: blank }));
    for (const y of years()) s.append(el('option', { value: String(y), text: String(y) }));
    s.value = value == null ? '' : String(value);
    return s;
  }

  function money(v) {
    return (state.info.currency ? state.info.currency + ' ' : '') + whole.format(v);
  }

  function chooseScenario(id) {
    state.info = state.scenarios[id];
    const info = state.info;
    const set = info.settings;
    document.querySelectorAll('.currency').forEach((e) => { e.textContent = info.currency ? info.currency + ', ' : ''; });
    const slider = $('budget-slider');
    slider.max = String(info.budget_max);
    slider.step = String(info.budget_step);
    setLevel(set.budget_level == null ? null : set.budget_level);
    const file = info.budget;
    let words = 'The file sets no network budget.';
    if (file && file.every((v) => v === file[0])) words = 'In the file: ' + money(file[0]) + ' a year.';
    else if (file) words = 'In the file: by year, ' + money(Math.min(...file)) + ' to ' + money(Math.max(...file)) + '. Leave the amount empty to keep it.';
    if (info.budget_groups.length) words += ' Budget groups (' + info.budget_groups.join(', ') + ') keep their caps.';
    $('budget-file').textContent = words;
    state.steps = [];
    $('escalation').value = String(round((set.cost_escalation || 0) * 100));
    for (const r of document.querySelectorAll('input[name=objective]')) r.checked = r.value === set.objective;
    state.targets = (set.targets || []).map(targetRow);
    state.pieces = {};
    for (const c of info.classes) state.pieces[c.name] = String((set.segment_sizes || {})[c.name] ?? '');
    $('alt-name').value = set.name || info.name;
    drawSteps();
    drawTargets();
    drawPieces();
  }

  // drawPieces draws one piece-size input per class.
  function drawPieces() {
    const list = $('pieces');
    list.replaceChildren();
    state.info.classes.forEach((c) => {
      const value = el('input', { type: 'number', min: '0', step: 'any', inputMode: 'decimal', 'aria-label': c.name + ': piece size', placeholder: c.pieces, value: state.pieces[c.name] });
      value.addEventListener('change', () => { state.pieces[c.name] = value.value; });
      list.append(el('li', { 'data-field': 'segment_sizes.' + c.name }, word(c.name), value, word(c.unit)));
    });
  }

  function setLevel(v) {
    $('budget-level').value = v == null ? '' : String(v);
    if (v != null) $('budget-slider').value = String(v);
    showLevel();
  }

  function showLevel() {
    const v = $('budget-level').value;
    $('budget-words').textContent = v === '' ? 'as in the file' : money(Number(v)) + ' a year';
  }

  function drawSteps() {
    const list = $('steps');
    list.replaceChildren();
    state.steps.forEach((st, i) => {
      const from = yearSelect(st.from, null, 'Change ' + (i + 1) + ': from year');
      const to = yearSelect(st.to, 'the last year', 'Change ' + (i + 1) + ': to year');
      const kind = el('select', { 'aria-label': 'Change ' + (i + 1) + ': kind' },
        el('option', { value: 'percent', text: 'change by %' }),
        el('option', { value: 'amount', text: 'set to' }));
      kind.value = st.kind;
      const value = el('input', { type: 'number', step: 'any', inputMode: 'decimal', 'aria-label': 'Change ' + (i + 1) + ': value', value: String(st.value) });
      if (st.kind === 'amount') value.className = 'amount';
      const remove = el('button', { type: 'button', class: 'remove', text: '\u00d7', 'aria-label': 'Remove change ' + (i + 1) });
      from.addEventListener('change', () => { st.from = Number(from.value); });
      to.addEventListener('change', () => { st.to = to.value === '' ? null : Number(to.value); });
      kind.addEventListener('change', () => { st.kind = kind.value; drawSteps(); });
      value.addEventListener('change', () => { st.value = value.value === '' ? 0 : Number(value.value); });
      remove.addEventListener('click', () => { state.steps.splice(i, 1); drawSteps(); schedule(); });
      list.append(el('li', { 'data-field': 'budget_steps[' + i + ']' }, word('from'), from, word('to'), to, kind, value, remove));
    });
  }

  // targetRow turns a target as written in the file into a row.
  function targetRow(t) {
    const row = { who: t.class || 'all', measure: 'poor', bound: 'max', value: 15, from: t.from_year ?? null, to: t.to_year ?? null,
      confidence: t.confidence != null ? String(round(100 * t.confidence)) : '' };
    if (t.hold) row.measure = 'hold';
    else if (t.min_average_index != null) { row.measure = 'index'; row.value = t.min_average_index; }
    else {
      row.measure = t.state ? 'state' : (t.group || 'poor');
      if (t.state) row.state = t.state;
      row.bound = t.max_share != null ? 'max' : 'min';
      row.value = round(100 * (t.max_share ?? t.min_share ?? 0));
    }
    return row;
  }

  // targetSpec turns a row back into a target with the file's keys.
  function targetSpec(row) {
    const t = { class: row.who };
    if (row.measure === 'hold') { t.hold = true; return t; }
    if (row.measure === 'index') t.min_average_index = row.value;
    else {
      if (row.measure === 'state') t.state = row.state;
      else t.group = row.measure;
      t[row.bound === 'max' ? 'max_share' : 'min_share'] = row.value / 100;
    }
    if (row.from != null) t.from_year = row.from;
    if (row.to != null) t.to_year = row.to;
    if (row.confidence !== '') t.confidence = Number(row.confidence) / 100;
    return t;
  }

  function scaleOf(who) {
    const c = state.info.classes.find((c) => c.name === who);
    return c || (state.info.network_index ? state.info.classes[0] : null);
  }

  function drawTargets() {
    const list = $('targets');
    list.replaceChildren();
    state.targets.forEach((row, i) => {
      const n = 'Target ' + (i + 1) + ': ';
      const who = el('select', { 'aria-label': n + 'applies to' }, el('option', { value: 'all', text: 'network' }));
      for (const c of state.info.classes) who.append(el('option', { value: c.name, text: c.name }));
      who.value = row.who;
      const measure = el('select', { 'aria-label': n + 'measure' },
        el('option', { value: 'poor', text: 'poor share' }),
        el('option', { value: 'fair', text: 'fair share' }),
        el('option', { value: 'good', text: 'good share' }));
      const cls = state.info.classes.find((c) => c.name === row.who);
      // A state belongs to one class's scale: only a class offers it.
      if (cls) measure.append(el('option', { value: 'state', text: 'share in a state' }));
      measure.append(
        el('option', { value: 'index', text: 'average index' }),
        el('option', { value: 'hold', text: "today's condition held" }));
      measure.value = row.measure;
      const parts = [who, measure];
      if (row.measure === 'state') {
        const st = el('select', { 'aria-label': n + 'state' });
        for (const name of cls.states) st.append(el('option', { value: name, text: name }));
        if (!cls.states.includes(row.state)) row.state = cls.states[cls.states.length - 1];
        st.value = row.state;
        st.addEventListener('change', () => { row.state = st.value; });
        parts.push(st);
      }
      if (row.measure !== 'hold') {
        const scale = scaleOf(row.who);
        if (row.measure === 'index') {
          const word = scale && scale.lower_is_better ? 'at most' : 'at least';
          parts.push(el('span', { text: word }));
        } else {
          const bound = el('select', { 'aria-label': n + 'bound' },
            el('option', { value: 'max', text: 'at most' }), el('option', { value: 'min', text: 'at least' }));
          bound.value = row.bound;
          bound.addEventListener('change', () => { row.bound = bound.value; });
          parts.push(bound);
        }
        const value = el('input', { type: 'number', step: 'any', inputMode: 'decimal', 'aria-label': n + 'value', value: String(row.value) });
        value.addEventListener('change', () => { row.value = value.value === '' ? 0 : Number(value.value); });
        parts.push(value, el('span', { text: row.measure === 'index' ? (scale ? scale.scale : 'index') : '%' }));
        const from = yearSelect(row.from, 'the first year', n + 'from year');
        const to = yearSelect(row.to, 'the last year', n + 'to year');
        from.addEventListener('change', () => { row.from = from.value === '' ? null : Number(from.value); });
        to.addEventListener('change', () => { row.to = to.value === '' ? null : Number(to.value); });
        parts.push(word('from'), from, word('to'), to);
        // A confidence: the share of simulated runs in which the target
        // must hold; empty means the plan need only meet it on average.
        const conf = el('input', { type: 'number', min: '1', max: '99', step: 'any', inputMode: 'decimal', class: 'confidence', 'aria-label': n + 'confidence in % of simulated runs (empty: on average)', placeholder: 'average', value: row.confidence });
        conf.addEventListener('change', () => { row.confidence = conf.value; });
        parts.push(word('held in'), conf, word('% of runs'));
      }
      const remove = el('button', { type: 'button', class: 'remove', text: '\u00d7', 'aria-label': 'Remove target ' + (i + 1) });
      who.addEventListener('change', () => {
        row.who = who.value;
        if (row.measure === 'state' && row.who === 'all') row.measure = 'poor';
        drawTargets();
      });
      measure.addEventListener('change', () => {
        const was = row.measure;
        row.measure = measure.value;
        if (row.measure === 'index' && was !== 'index') {
          const s = scaleOf(row.who);
          row.value = s ? round((s.index_low + s.index_high) / 2, 1) : 50;
        } else if (was === 'index' && row.measure !== 'hold') row.value = 15;
        drawTargets();
      });
      remove.addEventListener('click', () => { state.targets.splice(i, 1); drawTargets(); schedule(); });
      parts.push(remove);
      list.append(el('li', { 'data-field': 'targets[' + i + ']' }, ...parts));
    });
  }

  // changes reads the controls into the changes the API takes.
  function changes() {
    const ch = {
      name: $('alt-name').value.trim(),
      budget_steps: state.steps.map((st) => {
        const s = { from_year: st.from };
        if (st.to != null) s.to_year = st.to;
        s[st.kind] = st.value;
        return s;
      }),
      cost_escalation: Number($('escalation').value || 0) / 100,
      targets: state.targets.map(targetSpec),
      objective: (document.querySelector('input[name=objective]:checked') || {}).value || '',
    };
    const level = $('budget-level').value;
    if (level !== '') ch.budget_level = Number(level);
    const sizes = {};
    for (const [name, v] of Object.entries(state.pieces)) if (v !== '') sizes[name] = Number(v);
    if (Object.keys(sizes).length) ch.segment_sizes = sizes;
    return ch;
  }

  // ---- planning ----------------------------------------------------------

  function schedule(delay = 150) {
    clearTimeout(state.timer);
    state.timer = setTimeout(plan, delay);
  }

  function setStatus(text, kind) {
    const s = $('status');
    s.textContent = text;
    s.className = 'status' + (kind ? ' ' + kind : '');
  }

  async function post(path, body, signal, accept) {
    const headers = { 'Content-Type': 'application/json' };
    if (accept) headers.Accept = accept;
    return fetch(path, { method: 'POST', headers, body: JSON.stringify(body), signal });
  }

  // readParts calls onPart with each JSON line of an NDJSON answer as it
  // arrives.
  async function readParts(res, onPart) {
    const reader = res.body.getReader();
    const dec = new TextDecoder();
    let buf = '';
    for (;;) {
      const { value, done } = await reader.read();
      if (value) buf += dec.decode(value, { stream: true });
      let nl;
      while ((nl = buf.indexOf('\n')) >= 0) {
        const line = buf.slice(0, nl);
        buf = buf.slice(nl + 1);
        if (line.trim()) onPart(JSON.parse(line));
      }
      if (done) return;
    }
  }

  // plan asks for the plan of the controls in parts (servePlan): the
  // plan shows as soon as it is made, and again with the funding answers
  // when they follow.
  async function plan() {
    const request = { scenario: state.info.id, changes: changes(), bands: $('bands').checked };
    const seq = ++state.seq;
    if (state.inflight) state.inflight.abort();
    const ctl = new AbortController();
    state.inflight = ctl;
    setStatus('Planning\u2026', 'busy');
    const started = performance.now();
    let res, body, whole = false, planMs = 0;
    try {
      res = await post('/api/plan', request, ctl.signal, 'application/x-ndjson');
      if (!res.ok || !(res.headers.get('Content-Type') || '').startsWith('application/x-ndjson')) {
        body = await res.json();
      } else {
        await readParts(res, (p) => {
          if (seq !== state.seq) return;
          if (p.part === 'plan') {
            planMs = performance.now() - started;
            showPlan(p.answer, request, res.headers, planMs, false);
            return;
          }
          whole = true;
          if (p.error) {
            showProblems(p);
            setStatus('The plan is shown, but its funding answers failed: see the problems below.', 'failed');
            return;
          }
          showPlan(p.answer, request, res.headers, performance.now() - started, true, planMs);
        });
        if (seq !== state.seq) return;
        state.inflight = null;
        if (!whole) failed('The server stopped before it sent the funding answers. Is wearplan serve still running?');
        return;
      }
    } catch (e) {
      if (e.name === 'AbortError') return;
      if (seq === state.seq) failed('No answer from the server (' + e.message + '). Is wearplan serve still running?');
      return;
    }
    if (seq !== state.seq) return;
    state.inflight = null;
    if (!res.ok) {
      showProblems(body);
      setStatus('Not planned: see the problems below.', 'failed');
      $('results').classList.add('stale');
      return;
    }
    showPlan(body, request, res.headers, performance.now() - started, true);
  }

  function failed(text) {
    setStatus(text, 'failed');
    $('results').classList.add('stale');
  }

  // fieldLabel names a field of the changes as the page shows it.
  function fieldLabel(field) {
    let m = /^targets\[(\d+)\]/.exec(field);
    if (m) return 'Target ' + (Number(m[1]) + 1);
    m = /^budget_steps\[(\d+)\]/.exec(field);
    if (m) return 'Change by year ' + (Number(m[1]) + 1);
    if (field.startsWith('budget')) return 'Yearly budget';
    if (field.startsWith('cost_escalation')) return 'Cost escalation';
    if (field.startsWith('objective')) return 'Objective';
    if (field.startsWith('name')) return 'Name';
    m = /^segment_sizes\.(.*)$/.exec(field) || /^classes\[\d+\] \((.*)\)\.segment_size/.exec(field);
    if (m) return 'Piece size of ' + m[1];
    return field;
  }

  function controlOf(field) {
    let m = /^(targets|budget_steps)\[(\d+)\]/.exec(field);
    if (m) return document.querySelector('[data-field="' + m[1] + '[' + m[2] + ']"]');
    if (field.startsWith('budget')) return $('budget-level');
    if (field.startsWith('cost_escalation')) return $('escalation');
    if (field.startsWith('name')) return $('alt-name');
    if (field.startsWith('objective')) return $('f-objective');
    m = /^segment_sizes\.(.*)$/.exec(field) || /^classes\[\d+\] \((.*)\)\.segment_size/.exec(field);
    if (m) return document.querySelector('[data-field="segment_sizes.' + CSS.escape(m[1]) + '"]');
    return null;
  }

  function clearProblems() {
    $('problems').hidden = true;
    $('problems').replaceChildren();
    document.querySelectorAll('[aria-invalid]').forEach((e) => e.removeAttribute('aria-invalid'));
  }

  function showProblems(body) {
    clearProblems();
    const box = $('problems');
    box.append(el('strong', { text: body.error || 'The server could not plan these changes.' }));
    if (body.issues && body.issues.length) {
      const list = el('ul');
      for (const is of body.issues) {
        const where = is.file === 'what-if changes' ? fieldLabel(is.field || '') + (is.field ? ' (' + is.field + ')' : '') : is.text;
        let text = is.file === 'what-if changes' ? where + ': ' + is.message : where;
        // The message is the one a scenario file gets; this page takes
        // shares in percent.
        if (/_share$/.test(is.field || '')) text += ' (on this page, type shares in percent: 15 for 15%)';
        list.append(el('li', { text }));
        const c = controlOf(is.field || '');
        if (c) c.setAttribute('aria-invalid', 'true');
      }
      box.append(list);
    }
    box.hidden = false;
  }

  function fill(id, items) {
    $(id).replaceChildren(...items.map((t) => el('li', { text: t })));
  }

  // showPlan shows an answer: the plan alone (whole false; its funding
  // answers follow) or the whole answer, ms after the request (planMs
  // after it the plan alone, when it came first).
  function showPlan(a, request, headers, ms, whole, planMs) {
    clearProblems();
    $('results').classList.remove('stale');
    const from = headers.get('X-Wearplan-From');
    const took = headers.get('X-Wearplan-Solve-Ms');
    if (!whole) setStatus('Planned in ' + took + ' ms on the server; shown after ' + Math.round(ms) + ' ms. Working out the funding answers\u2026', 'busy');
    else if (from === 'memo') setStatus('Planned before; shown from memory (' + Math.round(ms) + ' ms).', '');
    else if (planMs) setStatus('Planned in ' + took + ' ms on the server; shown after ' + Math.round(planMs) + ' ms, the funding answers after ' + Math.round(ms) + ' ms.', '');
    else setStatus('Planned in ' + took + ' ms on the server; shown after ' + Math.round(ms) + ' ms, with the funding answers.', '');
    $('caution').textContent = a.caution;
    $('headline').textContent = a.headline;
    fill('shortfalls', a.shortfalls);
    fill('funding', whole ? a.funding : ['Working out what money would meet the targets\u2026']);
    $('funding').classList.toggle('pending', !whole);
    fill('warnings', a.warnings.map((w) => 'Note: ' + w));
    $('class-warnings').replaceChildren(...a.class_warnings.map(classWarning));
    const charts = a.panel.charts;
    const main = charts.filter((c) => c.id === 'current-chart-network' || c.id === 'current-chart-bands-network' || c.id === 'current-chart-spend');
    const classes = charts.filter((c) => !main.includes(c));
    $('charts-main').innerHTML = main.map((c) => c.html).join('');
    $('charts-classes').innerHTML = classes.map((c) => c.html).join('');
    $('los').innerHTML = a.panel.los;
    $('targets-table').innerHTML = a.panel.targets;
    $('spend-table').innerHTML = a.panel.spend;
    $('work-table').innerHTML = a.panel.work;
    $('summary').innerHTML = a.panel.summary;
    state.last = { request, answer: a };
    if (whole) {
      state.solves++;
      document.body.dataset.solves = String(state.solves);
    } else {
      state.early++;
      document.body.dataset.early = String(state.early);
    }
    drawCompare();
  }

  // classWarning shows what the plan does to a class, with a button that
  // adds the class targets that would stop it and plans again.
  function classWarning(w) {
    const li = el('li', { text: 'Warning: ' + w.text });
    if (w.suggested_targets.length) {
      const add = el('button', { type: 'button', text: w.suggested_targets.length === 1 ? 'Add this target' : 'Add these targets' });
      add.addEventListener('click', () => {
        state.targets.push(...w.suggested_targets.map(targetRow));
        drawTargets();
        schedule(0);
      });
      li.append(add);
    }
    return li;
  }

  // ---- kept alternatives -------------------------------------------------

  // planShown says whether the page shows the plan of its controls (not
  // an older one under a list of problems).
  function planShown() {
    if (state.last && $('problems').hidden) return true;
    setStatus('Fix the problems first: the plan shown is not the one of the controls.', 'failed');
    return false;
  }

  function keep() {
    if (!planShown()) return;
    const n = state.kept.length + 1;
    // A name left as the file's gets a number, so that the kept
    // alternatives, their files and reports can be told apart.
    let name = $('alt-name').value.trim() || state.info.name;
    if (name === state.info.name || state.kept.some((k) => k.name === name)) name += ', alternative ' + n;
    const request = structuredClone(state.last.request);
    request.changes.name = name;
    state.kept.push({ name, request, figures: state.last.answer.figures });
    drawCompare();
    $('compare').scrollIntoView({ behavior: 'smooth', block: 'nearest' });
  }

  function restore(k) {
    const info = state.scenarios[k.request.scenario];
    $('scenario').value = String(info.id);
    const saved = info.settings;
    info.settings = k.request.changes; // draw the controls from the kept changes
    chooseScenario(info.id);
    info.settings = saved;
    state.steps = (k.request.changes.budget_steps || []).map((s) => ({
      from: s.from_year, to: s.to_year ?? null, kind: s.percent != null ? 'percent' : 'amount', value: s.percent ?? s.amount,
    }));
    if (k.request.changes.budget_level == null) setLevel(null);
    drawSteps();
    schedule(0);
  }

  function drawCompare() {
    const section = $('compare');
    if (!state.kept.length) { section.hidden = true; return; }
    section.hidden = false;
    const cols = [{ name: 'Now on the page', figures: state.last ? state.last.answer.figures : [], current: true }, ...state.kept];
    const labels = [];
    for (const c of cols) for (const f of c.figures) if (!labels.includes(f.label)) labels.push(f.label);
    const table = el('table', { id: 'compare-alternatives' });
    table.append(el('caption', { text: 'Kept alternatives and the one now on the page' }));
    const head = el('tr', {}, el('th', { scope: 'col', text: 'Figure' }));
    cols.forEach((c, i) => {
      const th = el('th', { scope: 'col', class: c.current ? 'current' : '' }, c.name);
      if (!c.current) {
        const show = el('button', { type: 'button', text: 'Show', 'aria-label': 'Show ' + c.name + ' on the page' });
        const yaml = el('button', { type: 'button', text: 'YAML', 'aria-label': 'Save ' + c.name + ' as a scenario file' });
        const drop = el('button', { type: 'button', class: 'remove', text: '\u00d7', 'aria-label': 'Remove ' + c.name + ' from the list' });
        show.addEventListener('click', () => restore(c));
        yaml.addEventListener('click', () => download('yaml', [c.request]));
        drop.addEventListener('click', () => { state.kept.splice(i - 1, 1); drawCompare(); });
        th.append(el('div', { class: 'col-actions' }, show, yaml, drop));
      }
      head.append(th);
    });
    table.append(el('thead', {}, head));
    const body = el('tbody');
    for (const label of labels) {
      const values = cols.map((c) => (c.figures.find((f) => f.label === label) || { value: '-' }).value);
      const tr = el('tr', {}, el('th', { scope: 'row', text: label }));
      values.forEach((v, i) => {
        const differs = i > 0 && values.slice(1).some((w) => w !== values[1]);
        tr.append(el('td', { class: (cols[i].current ? 'current ' : '') + (differs ? 'differs' : ''), text: v }));
      });
      body.append(tr);
    }
    table.append(body);
    $('compare-table').replaceChildren(table);
  }

  // ---- downloads ---------------------------------------------------------

  async function download(format, alternatives) {
    setStatus('Preparing the ' + format + ' file\u2026', 'busy');
    let res;
    try {
      res = await post('/api/download', { format, alternatives });
    } catch (e) {
      failed('No answer from the server (' + e.message + ').');
      return;
    }
    if (!res.ok) {
      showProblems(await res.json());
      setStatus('Not saved: see the problems below.', 'failed');
      return;
    }
    const blob = await res.blob();
    const m = /filename="([^"]+)"/.exec(res.headers.get('Content-Disposition') || '');
    const url = URL.createObjectURL(blob);
    const a = el('a', { href: url, download: m ? m[1] : 'wearplan.' + format });
    document.body.append(a);
    a.click();
    a.remove();
    setTimeout(() => URL.revokeObjectURL(url), 30000);
    setStatus('Saved ' + a.download + '.', '');
  }

  // ---- start -------------------------------------------------------------

  function wire() {
    const form = $('controls');
    form.addEventListener('submit', (e) => { e.preventDefault(); schedule(0); });
    form.addEventListener('change', (e) => {
      if (e.target.id === 'scenario') { chooseScenario(Number(e.target.value)); schedule(0); return; }
      if (e.target.id === 'alt-name') return; // a name changes no figure
      schedule();
    });
    $('budget-slider').addEventListener('input', (e) => { $('budget-level').value = e.target.value; showLevel(); });
    $('budget-level').addEventListener('input', showLevel);
    $('budget-reset').addEventListener('click', () => {
      const set = state.info.settings;
      setLevel(set.budget_level == null ? null : set.budget_level);
      state.steps = [];
      drawSteps();
      schedule(0);
    });
    $('add-step').addEventListener('click', () => {
      const ys = years();
      state.steps.push({ from: ys[Math.min(2, ys.length - 1)], to: null, kind: 'percent', value: -15 });
      drawSteps();
      schedule();
    });
    $('add-target').addEventListener('click', () => {
      state.targets.push({ who: 'all', measure: 'poor', bound: 'max', value: 15, from: null, to: null, confidence: '' });
      drawTargets();
      schedule();
    });
    $('keep').addEventListener('click', keep);
    document.querySelectorAll('[data-download]').forEach((b) => b.addEventListener('click', () => {
      if (!planShown()) return;
      // The name may have changed since the plan (a name changes no figure).
      const request = structuredClone(state.last.request);
      request.changes.name = $('alt-name').value.trim();
      download(b.dataset.download, [request]);
    }));
    document.querySelectorAll('[data-compare]').forEach((b) => b.addEventListener('click', () => {
      download(b.dataset.compare, state.kept.map((k) => k.request));
    }));
    $('compare-clear').addEventListener('click', () => { state.kept = []; drawCompare(); });
  }

  async function start() {
    wire();
    try {
      const res = await fetch('/api/scenarios');
      state.scenarios = await res.json();
    } catch (e) {
      failed('Could not load the scenarios (' + e.message + ').');
      return;
    }
    chooseScenario(0);
    plan();
  }

  start();
})();
