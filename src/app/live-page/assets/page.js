// The live page's script: no build step, no library. State arrives as server-sent events
// (`snapshot` on connect, `update` each push); the page keeps each group's trend and redraws.
const $ = (id) => document.getElementById(id);
const SVG = 'http://www.w3.org/2000/svg';
const LEVEL_MARKS = ['!', '!!', '!!!', '!!!!'];

/** Element helper: el('td', { class: 'x' }, 'text', child). */
function el(tag, attrs = {}, ...children) {
  const e = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) if (v !== undefined && v !== null) e.setAttribute(k, String(v));
  for (const c of children) e.append(c);
  return e;
}
const fmt = (v, digits = 1) => (v === null || v === undefined || !Number.isFinite(v) ? '—' : v.toFixed(digits));
const utc = (ms) => (ms === null || ms === undefined ? '—' : new Date(ms).toISOString().slice(11, 19));
const age = (s) => (s === null || s === undefined ? '—' : s < 10 ? `${s.toFixed(1)} s` : s < 120 ? `${Math.round(s)} s` : `${Math.round(s / 60)} min`);

const page = { view: null, trendMs: 300_000, groups: new Map(), onScreen: new Set(), lastEventAt: 0, openAlarmId: null, fatigueAtMs: null };

// ---- groups -------------------------------------------------------------------------------

function groupCard(g) {
  const values = el('dl', { class: 'vals' });
  const card = el('article', { class: 'group', 'data-group': g.id, 'data-zone': g.zone },
    el('h4', {}, g.id, ' ', el('span', { class: 'kind' }, `${g.kind.replace('_', ' ')} · ${g.material}`)),
    el('p', { class: 'loc' }, g.location),
    values,
    el('p', { class: 'flags' }),
    el('p', { class: 'alarm-note' }),
    el('p', { class: 'when' }),
  );
  const svg = document.createElementNS(SVG, 'svg');
  svg.setAttribute('viewBox', '0 0 320 110');
  svg.setAttribute('class', 'trend');
  svg.setAttribute('role', 'img');
  card.append(svg);
  return { card, values, svg, trend: [], search: `${g.id} ${g.zone} ${g.location}`.toLowerCase() };
}

function valueRows(g) {
  const v = g.values;
  const rows = [];
  if (v.stress_axial_MPa !== undefined) rows.push(['axial stress', fmt(v.stress_axial_MPa), 'MPa']);
  if (v.principal_1_MPa !== undefined) rows.push(['σ1 (principal 1)', fmt(v.principal_1_MPa), 'MPa']);
  if (v.principal_2_MPa !== undefined) rows.push(['σ2 (principal 2)', fmt(v.principal_2_MPa), 'MPa']);
  if (v.principal_3_MPa !== undefined) rows.push(['σ3 (principal 3)', fmt(v.principal_3_MPa), 'MPa']);
  if (v.principal_angle_deg !== undefined) rows.push(['direction of σ1', fmt(v.principal_angle_deg), '° from x']);
  else if (v.principal_1_dir_x !== undefined) rows.push(['direction of σ1', `(${fmt(v.principal_1_dir_x, 2)}, ${fmt(v.principal_1_dir_y, 2)}, ${fmt(v.principal_1_dir_z, 2)})`, 'x, y, z']);
  rows.push(['von Mises', fmt(v.von_mises_MPa), 'MPa']);
  const ratios = [['ratio_von_mises_to_yield', 'von Mises / yield'], ['ratio_tension_to_tensile_strength', 'tension / tensile strength'], ['ratio_compression_to_compressive_strength', 'compression / compressive strength']]
    .filter(([k]) => v[k] !== undefined).sort((a, b) => v[b[0]] - v[a[0]]);
  if (ratios.length > 0) rows.push([`ratio to capacity (${ratios[0][1]})`, fmt(v[ratios[0][0]], 3), '']);
  if (v.temperature_degC !== undefined) rows.push(['temperature', fmt(v.temperature_degC), '°C']);
  return rows;
}

function drawTrend(svg, points, group) {
  const id = group.id;
  svg.replaceChildren();
  const W = 320, H = 110, L = 44, R = 6, T = 22, B = 18;
  const vals = points.flatMap((p) => [p[1], p[2], p[3]]).filter((x) => x !== null);
  const title = document.createElementNS(SVG, 'title');
  title.textContent = `${id}: stress trend, last ${Math.round(page.trendMs / 60000)} min, MPa`;
  svg.append(title);
  const text = (x, y, s, anchor = 'start', cls = 'axis') => {
    const t = document.createElementNS(SVG, 'text');
    t.setAttribute('x', x); t.setAttribute('y', y); t.setAttribute('text-anchor', anchor); t.setAttribute('class', cls);
    t.textContent = s;
    svg.append(t);
  };
  text(2, 10, 'MPa', 'start', 'axis unit');
  if (vals.length === 0) { text(W / 2, H / 2, 'no results yet', 'middle'); return; }
  let lo = Math.min(0, ...vals), hi = Math.max(0, ...vals);
  // The first von Mises limit is in the plot when the data come within half of it; others when in range.
  const limits = group.vonMisesLimits ?? [];
  if (limits.length > 0 && limits[0].value <= 2 * hi) hi = Math.max(hi, limits[0].value * 1.05);
  if (hi - lo < 1) hi = lo + 1;
  const above = limits.filter((l) => l.value > hi);
  if (above.length > 0) text(W - R, 10, `von Mises limits above: ${above.map((l) => `${l.level} ${fmt(l.value, 0)}`).join(', ')} MPa`, 'end', 'axis');
  const tEnd = points[points.length - 1][0], tStart = tEnd - page.trendMs;
  const x = (t) => L + ((t - tStart) / page.trendMs) * (W - L - R);
  const y = (v) => T + (1 - (v - lo) / (hi - lo)) * (H - T - B);
  for (const [v, cls] of [[hi, 'grid'], [0, 'zero'], [lo, 'grid']]) {
    const ln = document.createElementNS(SVG, 'line');
    ln.setAttribute('x1', L); ln.setAttribute('x2', W - R); ln.setAttribute('y1', y(v)); ln.setAttribute('y2', y(v)); ln.setAttribute('class', cls);
    svg.append(ln);
  }
  text(L - 4, y(hi) + 4, fmt(hi, 0), 'end');
  text(L - 4, y(lo) + 4, fmt(lo, 0), 'end');
  if (lo < 0 && hi > 0) text(L - 4, y(0) + 4, '0', 'end');
  for (const l of limits.filter((x) => x.value <= hi)) {
    const ln = document.createElementNS(SVG, 'line');
    ln.setAttribute('x1', L); ln.setAttribute('x2', W - R); ln.setAttribute('y1', y(l.value)); ln.setAttribute('y2', y(l.value)); ln.setAttribute('class', 'limit');
    svg.append(ln);
    text(W - R - 2, y(l.value) + 9, `${l.level} limit ${fmt(l.value, 0)} MPa`, 'end', 'axis limit-label');
  }
  text(L, H - 3, `−${Math.round(page.trendMs / 60000)} min`, 'start');
  text(W - R, H - 3, 'now', 'end');
  for (const [k, cls] of [[1, 'vm'], [2, 'pmax'], [3, 'pmin']]) {
    const pts = points.filter((p) => p[k] !== null && p[0] >= tStart).map((p) => `${x(p[0]).toFixed(1)},${y(p[k]).toFixed(1)}`);
    if (pts.length === 0) continue;
    const line = document.createElementNS(SVG, 'polyline');
    line.setAttribute('points', pts.join(' '));
    line.setAttribute('class', `series ${cls}`);
    svg.append(line);
  }
}

function mergeTrend(entry, points) {
  const t = entry.trend;
  for (const p of points) {
    const last = t.length === 0 ? null : t[t.length - 1];
    if (last === null || p[0] > last[0]) t.push(p);
    else {
      const i = t.findIndex((q) => q[0] === p[0]);
      if (i >= 0) t[i] = p;
    }
  }
  const cut = t.length === 0 ? 0 : t[t.length - 1][0] - page.trendMs;
  while (t.length > 0 && t[0][0] < cut) t.shift();
}

function buildGroups(view) {
  const zones = $('zones');
  screenWatch.disconnect();
  page.onScreen.clear();
  zones.replaceChildren();
  page.groups.clear();
  const byZone = new Map();
  for (const g of view.groups) {
    if (!byZone.has(g.zone)) byZone.set(g.zone, []);
    byZone.get(g.zone).push(g);
  }
  for (const [zone, groups] of byZone) {
    const list = el('div', { class: 'cards' });
    const summary = el('summary', {}, `Zone ${zone}`, ' ', el('span', { class: 'zone-note' }));
    const box = el('details', { class: 'zone', open: '', 'data-zone': zone }, summary, list);
    for (const g of groups) {
      const entry = groupCard(g);
      entry.zoneBox = box;
      page.groups.set(g.id, entry);
      list.append(entry.card);
      screenWatch.observe(entry.card);
    }
    zones.append(box);
  }
  $('group-count').textContent = `(${view.groups.length})`;
}

function groupAlarms(view) {
  const m = new Map();
  for (const a of view.alarms) {
    const gid = a.subject.kind === 'group' ? a.subject.groupId : a.subject.kind === 'channel' ? a.subject.groupId : null;
    if (gid === null) continue;
    if (!m.has(gid)) m.set(gid, []);
    m.get(gid).push(a);
  }
  return m;
}

/** Values, flags, alarms, age and trend of one card, from its latest data; the trend only when it changed. */
function paintGroup(e) {
  if (e.latest === undefined) return;
  const { g, alarms, clockMs } = e.latest;
  const rows = valueRows(g);
  const rowsKey = rows.map((r) => r.join('|')).join(';');
  if (e.rowsKey !== rowsKey) {
    e.values.replaceChildren(...rows.flatMap(([k, v, u]) => [el('dt', {}, k), el('dd', {}, el('span', { class: 'num' }, v), u ? ` ${u}` : '')]));
    e.rowsKey = rowsKey;
  }
  const flags = e.card.querySelector('.flags');
  const flagsKey = g.timeMs === null ? 'none' : g.flags.join(',');
  if (e.flagsKey !== flagsKey) {
    if (g.timeMs === null) flags.replaceChildren(el('span', { class: 'flag none' }, '… no result yet'));
    else if (g.flags.length === 0) flags.replaceChildren(el('span', { class: 'flag good' }, '✓ quality: good'));
    else flags.replaceChildren(...g.flags.map((f) => el('span', { class: 'flag bad' }, `⚑ ${f.replaceAll('_', ' ')}`)));
    e.flagsKey = flagsKey;
  }
  e.card.querySelector('.alarm-note').textContent = alarms.length === 0 ? '' : `${LEVEL_MARKS[Math.min(alarms[0].levelIndex, 3)]} ${alarms.length} open alarm${alarms.length > 1 ? 's' : ''}: ${alarms.map((a) => `${a.level} ${a.ruleId}`).join(', ')}`;
  const ageS = g.timeMs === null || clockMs === null ? null : Math.max(0, (clockMs - g.timeMs) / 1000);
  e.card.querySelector('.when').textContent = g.timeMs === null ? 'no result received' : `result of ${utc(g.timeMs)} UTC (${age(ageS)} ago)`;
  const last = e.trend.length === 0 ? null : e.trend[e.trend.length - 1];
  const key = `${e.trend.length}:${last === null ? '' : last.join(',')}:${e.trend.length ? e.trend[0][0] : ''}`;
  if (e.drawn !== key) { drawTrend(e.svg, e.trend, g); e.drawn = key; }
}

/** Cards near the screen, kept by an IntersectionObserver; a card coming into view is painted at once. */
const screenWatch = new IntersectionObserver((entries) => {
  for (const en of entries) {
    const id = en.target.dataset.group;
    if (en.isIntersecting) {
      page.onScreen.add(id);
      const e = page.groups.get(id);
      if (e) paintGroup(e);
    } else page.onScreen.delete(id);
  }
}, { rootMargin: '400px 0px' });

function renderGroups(view) {
  const alarmsByGroup = groupAlarms(view);
  const filter = $('filter').value.trim().toLowerCase();
  const onlyAttention = $('only-attention').checked;
  const zoneCounts = new Map();
  for (const g of view.groups) {
    const e = page.groups.get(g.id);
    if (e === undefined) continue;
    mergeTrend(e, g.trend);
    const alarms = alarmsByGroup.get(g.id) ?? [];
    e.latest = { g, alarms, clockMs: view.clockMs };
    const attention = alarms.length > 0 || g.flags.length > 0 || g.timeMs === null;
    e.card.classList.toggle('attention', attention);
    e.card.classList.toggle('alarmed', alarms.length > 0);
    const shown = (!filter || e.search.includes(filter)) && (!onlyAttention || attention);
    e.card.hidden = !shown;
    // Only cards on the screen are painted: hundreds of groups stay cheap to update each second.
    if (shown && page.onScreen.has(g.id)) paintGroup(e);
    const zc = zoneCounts.get(g.zone) ?? { shown: 0, total: 0, alarmed: 0, flagged: 0 };
    zc.total++; if (shown) zc.shown++; if (alarms.length > 0) zc.alarmed++; if (g.flags.length > 0) zc.flagged++;
    zoneCounts.set(g.zone, zc);
  }
  for (const box of $('zones').children) {
    const zc = zoneCounts.get(box.dataset.zone);
    if (!zc) continue;
    box.hidden = zc.shown === 0;
    box.querySelector('.zone-note').textContent = `— ${zc.total} group${zc.total > 1 ? 's' : ''}, ${zc.alarmed} with open alarms, ${zc.flagged} with quality flags${zc.shown < zc.total ? `, ${zc.shown} shown` : ''}`;
  }
}

// ---- alarms -------------------------------------------------------------------------------

function subjectText(a) {
  const s = a.subject;
  if (s.kind === 'group') return `group ${s.groupId}`;
  if (s.kind === 'channel') return `channel ${s.loggerId}/${s.channelId}${s.groupId ? ` (group ${s.groupId})` : ''}`;
  if (s.kind === 'detail') return `fatigue detail ${s.detailId} (group ${s.groupId})`;
  if (s.kind === 'component') return `processor ${s.component}`;
  return `logger ${s.loggerId}`;
}
function stateText(a) {
  if (a.state === 'active_unacknowledged') return 'ACTIVE, not acknowledged';
  if (a.state === 'active_acknowledged') return `active, acknowledged by ${a.acknowledgement?.user ?? '?'}`;
  if (a.state === 'cleared_unacknowledged') return 'cleared, not acknowledged';
  return a.state;
}

function renderAlarms(view) {
  const rows = $('alarm-rows');
  $('alarm-count').textContent = `(${view.alarms.length})`;
  if (view.alarms.length === 0) {
    rows.replaceChildren(el('tr', {}, el('td', { colspan: 7 }, 'No open alarms. (A silent logger or processor raises one; no alarm is not the same as no data: see instrument health below.)')));
  } else {
    rows.replaceChildren(...view.alarms.map((a) => {
      const mark = LEVEL_MARKS[Math.min(a.levelIndex, 3)];
      const ack = a.state === 'active_acknowledged'
        ? el('td', {}, `by ${a.acknowledgement?.user}: “${a.acknowledgement?.reason}”`)
        : el('td', {}, el('button', { type: 'button', class: 'ack', 'data-alarm-id': a.id }, 'Acknowledge…'));
      return el('tr', { class: `alarm lvl-${Math.min(a.levelIndex, 3)} ${a.state}`, 'data-alarm-id': a.id, 'data-rule': a.ruleId },
        el('td', {}, el('span', { class: 'level' }, `${mark} ${a.level}`), el('br'), el('small', {}, a.alarmClass === 'health' ? 'instrument health' : 'structural')),
        el('td', {}, stateText(a), a.flapping ? el('small', {}, ' (flapping)') : '', a.tier > 0 ? el('small', {}, ` escalated to tier ${a.tier + 1}`) : ''),
        el('td', {}, el('strong', {}, a.ruleId), ` on ${a.quantity}`, el('br'), el('small', {}, a.action)),
        el('td', {}, subjectText(a), el('br'), el('small', {}, `zone ${a.zone}: ${a.location}`)),
        el('td', { class: 'num' }, `${fmt(a.value, 2)} / ${fmt(a.limit, 2)} ${a.units}`),
        el('td', {}, utc(a.sinceMs), a.raiseCount > 1 ? el('small', {}, ` raised ${a.raiseCount}×`) : ''),
        ack);
    }));
  }
  const box = $('refusals-box');
  box.hidden = view.refusals.length === 0;
  $('refusal-count').textContent = `(${view.refusals.length})`;
  $('refusal-list').replaceChildren(...view.refusals.map((r) => el('li', {}, `${utc(r.atMs)} UTC — ${r.user || '(no user)'} on ${r.alarmId || '(no alarm)'}: refused (${r.code}): ${r.reason}`)));
}

// ---- fatigue ------------------------------------------------------------------------------

const sci = (v) => (v === null || v === undefined || !Number.isFinite(v) ? '—' : v === 0 ? '0' : Math.abs(v) < 1e-3 ? v.toExponential(2) : v.toPrecision(3));
const span = (s) => (s < 120 ? `${s.toFixed(1)} s` : s < 7200 ? `${(s / 60).toFixed(1)} min` : s < 172_800 ? `${(s / 3600).toFixed(1)} h` : `${(s / 86_400).toFixed(1)} days`);
const lifeText = (d) => (d.remainingLifeYears === null ? 'not known yet' : d.remainingLifeYears === 'unbounded' ? 'no damage over the rate window'
  : `${d.remainingLifeYears >= 100 ? d.remainingLifeYears.toFixed(0) : d.remainingLifeYears.toPrecision(3)} years at the recent rate`);

/** Histogram (bars: cycles per hot-spot range bin) against the S-N curve (cycles to failure), cycles on a log scale. */
function drawFatigue(svg, d) {
  svg.replaceChildren();
  const W = 320, H = 130, L = 34, R = 6, T = 8, B = 18;
  const title = document.createElementNS(SVG, 'title');
  title.textContent = `${d.id}: stress-range histogram against the S-N curve`;
  svg.append(title);
  const add = (tag, attrs, textContent) => {
    const e = document.createElementNS(SVG, tag);
    for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, String(v));
    if (textContent !== undefined) e.textContent = textContent;
    svg.append(e);
    return e;
  };
  const last = d.counts.length - 1;
  let top = 0;
  d.counts.forEach((c, i) => { if (c > 0) top = Math.max(top, (i + (i === last ? 1.5 : 1)) * d.binWidthMPa); });
  const at2e6 = d.curve.reduce((best, p) => (Math.abs(Math.log10(p[0] / 2e6)) < Math.abs(Math.log10(best[0] / 2e6)) ? p : best), d.curve[0])[1];
  const yMax = Math.max(top, 1.25 * at2e6);
  const x = (n) => L + ((Math.log10(Math.min(Math.max(n, 0.1), 1e9)) + 1) / 10) * (W - L - R);
  const y = (v) => T + (1 - Math.min(v, yMax) / yMax) * (H - T - B);
  for (const e of [0, 2, 4, 6, 8]) {
    add('line', { x1: x(10 ** e), x2: x(10 ** e), y1: T, y2: H - B, class: 'grid' });
    add('text', { x: x(10 ** e), y: H - 5, 'text-anchor': 'middle', class: 'axis' }, `1e${e}`);
  }
  add('text', { x: L - 3, y: y(yMax) + 8, 'text-anchor': 'end', class: 'axis' }, fmt(yMax, 0));
  add('text', { x: L - 3, y: y(0), 'text-anchor': 'end', class: 'axis' }, '0');
  add('text', { x: 2, y: T + 40, class: 'axis unit', transform: `rotate(-90 8 ${T + 40})` }, 'MPa');
  d.counts.forEach((c, i) => {
    if (!(c > 0)) return;
    const hi = i === last ? yMax : (i + 1) * d.binWidthMPa;
    const r = add('rect', { x: L, y: y(hi).toFixed(1), width: Math.max(1, x(c) - L).toFixed(1), height: Math.max(1, y(i * d.binWidthMPa) - y(hi) - 0.5).toFixed(1), class: 'bin' });
    const t = document.createElementNS(SVG, 'title');
    t.textContent = `${fmt(i * d.binWidthMPa, 0)}${i === last ? ' MPa and above' : `–${fmt(hi, 0)} MPa`}: ${fmt(c, 1)} cycles`;
    r.append(t);
  });
  add('polyline', { points: d.curve.filter((p) => p[1] <= yMax).map((p) => `${x(p[0]).toFixed(1)},${y(p[1]).toFixed(1)}`).join(' '), class: 'sn-curve' });
  add('text', { x: W - R, y: H - B - 4, 'text-anchor': 'end', class: 'axis' }, 'cycles (log) · bars: counted · line: S-N curve');
}

function renderFatigue(view) {
  const f = view.fatigue;
  $('fatigue').hidden = f === null || f === undefined;
  if (!f || page.fatigueAtMs === f.atMs) return;
  page.fatigueAtMs = f.atMs;
  $('fatigue-at').textContent = `(figures at ${utc(f.atMs)} UTC, logger time)`;
  $('fatigue-assumptions').replaceChildren(...f.assumptions.map((a) => el('li', {}, a)));
  $('fatigue-details').replaceChildren(...f.details.map((d) => {
    const svg = document.createElementNS(SVG, 'svg');
    svg.setAttribute('viewBox', '0 0 320 130');
    svg.setAttribute('class', 'trend fatigue');
    svg.setAttribute('role', 'img');
    drawFatigue(svg, d);
    const rows = [
      ['damage so far (Miner)', sci(d.damage)],
      ['damage per monitored day', d.damagePerDay === null ? 'not known yet' : `${sci(d.damagePerDay)} (over ${span(d.rateWindowS)})`],
      ['remaining life', lifeText(d)],
      ['cycles counted', fmt(d.cycles, 1)],
      ['monitored', span(d.monitoredS)],
      ['not monitored', d.notMonitoredS > 0 ? `${span(d.notMonitoredS)}: no damage counted for it` : '0 s'],
    ];
    return el('article', { class: `fatigue-detail${d.notMonitoredS > 0 ? ' attention' : ''}`, 'data-detail': d.id },
      el('h4', {}, d.id, ' ', el('span', { class: 'kind' }, `group ${d.groupId}`)),
      el('p', { class: 'loc' }, `${d.location}. ${d.describe}.`),
      el('dl', { class: 'vals' }, ...rows.flatMap(([k, v]) => [el('dt', {}, k), el('dd', { class: k === 'not monitored' && d.notMonitoredS > 0 ? 'warn' : '' }, v)])),
      svg);
  }));
}

// ---- instruments and processor ------------------------------------------------------------

function renderLoggers(view) {
  const healthByLogger = new Map();
  for (const a of view.alarms) {
    if (a.alarmClass !== 'health' || a.subject.kind === 'group') continue;
    const key = a.subject.kind === 'channel' ? `${a.subject.loggerId}/${a.subject.channelId}` : a.subject.loggerId;
    healthByLogger.set(key, [...(healthByLogger.get(key) ?? []), a.ruleId]);
    if (a.subject.kind === 'channel') healthByLogger.set(`${a.subject.loggerId}#any`, (healthByLogger.get(`${a.subject.loggerId}#any`) ?? 0) + 1);
  }
  const open = new Set([...$('loggers').querySelectorAll('details[open]')].map((d) => d.dataset.logger));
  $('loggers').replaceChildren(...view.loggers.map((l) => {
    const stateLabel = l.state === 'receiving' ? `✓ receiving, last scan ${age(l.ageS)} ago` : l.state === 'silent' ? `✕ SILENT for ${age(l.ageS)}` : '… waiting for the first scan';
    const own = healthByLogger.get(l.id) ?? [];
    const chAlarms = healthByLogger.get(`${l.id}#any`) ?? 0;
    const summary = el('summary', {}, el('strong', {}, l.id), ` — ${stateLabel}; ${l.frames} scans, ${l.seqGaps} missing by sequence number; `,
      own.length + chAlarms === 0 ? 'no open health alarm' : `${own.length + chAlarms} open health alarm${own.length + chAlarms > 1 ? 's' : ''}${own.length ? ` (${own.join(', ')})` : ''}`);
    const table = () => el('table', { class: 'channels' },
      el('thead', {}, el('tr', {}, ...['Channel', 'Group', 'Last reading', 'Age', 'Null readings', 'Range', 'Open alarms'].map((h) => el('th', { scope: 'col' }, h)))),
      el('tbody', {}, ...l.channels.map((c) => {
        const alarms = healthByLogger.get(`${l.id}/${c.id}`) ?? [];
        return el('tr', { class: alarms.length ? 'attention' : '' },
          el('td', {}, c.id), el('td', {}, c.groupId ?? '—'),
          el('td', { class: 'num' }, c.lastValue === null ? (c.ageS === null ? '—' : 'null (not read)') : `${fmt(c.lastValue, 4)} ${c.unit}`),
          el('td', {}, age(c.ageS)), el('td', { class: 'num' }, String(c.nulls)),
          el('td', {}, c.outOfRange ? '✕ OUT OF RANGE' : c.ageS === null ? '—' : '✓ in range'),
          el('td', {}, alarms.length ? `⚑ ${alarms.join(', ')}` : '—'));
      })));
    // The channel table is built only for an open logger (a structure may have hundreds of channels).
    const d = el('details', { class: `logger ${l.state}`, 'data-logger': l.id }, summary, el('p', { class: 'loc' }, `zone ${l.zone}: ${l.location}; expected every ${l.expectedIntervalS} s`));
    if (open.has(l.id)) { d.open = true; d.append(el('div', { class: 'table-wrap' }, table())); }
    d.addEventListener('toggle', () => { if (d.open && d.querySelector('table') === null) d.append(el('div', { class: 'table-wrap' }, table())); });
    return d;
  }));
}

function renderProcessor(view) {
  const p = view.processor;
  const dl = $('processor-figures');
  if (p === null) { dl.replaceChildren(el('dt', {}, 'status'), el('dd', {}, 'not sampled yet')); return; }
  const r = p.rates;
  const db = !p.databaseConfigured ? 'none configured: results go to line-protocol files'
    : p.databaseReachable === true ? '✓ reachable' : p.databaseReachable === false ? '✕ NOT reachable: results are spooled on disk' : 'not known yet';
  const items = [
    ['messages in (last 10 s)', r ? `${fmt(r.messagesPerS)} /s` : '—'],
    ['group results computed (last 10 s)', r ? `${fmt(r.resultsPerS)} /s` : '—'],
    ['messages refused (dead letters)', `${r ? `${fmt(r.rejectedPerS)} /s, ` : ''}${p.rejected} since start`],
    ['backlog: messages not yet stored (acknowledgement held)', String(p.heldAcks)],
    ['write errors since start', String(p.writeErrors)],
    ['database', db],
    ['spool fill', p.spoolFillRatio === null ? '— (no spool)' : `${fmt(p.spoolFillRatio * 100)} %`],
    ['pipeline clock', `${utc(view.clockMs)} UTC`],
  ];
  dl.replaceChildren(...items.flatMap(([k, v]) => [el('dt', {}, k), el('dd', {}, v)]));
}

function render() {
  const v = page.view;
  if (v === null) return;
  $('structure-name').textContent = `${v.structureName} (${v.structureId})`;
  if (v.notice) { $('page-notice').textContent = v.notice; $('page-notice').hidden = false; }
  renderAlarms(v);
  renderGroups(v);
  renderFatigue(v);
  renderLoggers(v);
  renderProcessor(v);
}

// ---- acknowledgement ----------------------------------------------------------------------

function showAckResult(text, kind) {
  for (const id of ['ack-result', 'ack-dialog-result']) {
    const p = $(id);
    p.textContent = text;
    p.className = `ack-result ${kind}`;
    p.hidden = false;
  }
}

async function sendAck(alarmId, user, reason) {
  let res;
  try {
    res = await fetch('ack', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ alarm_id: alarmId, user, reason }) });
  } catch (err) {
    showAckResult(`Not sent: the processor cannot be reached (${err.message}).`, 'refused');
    return;
  }
  const body = await res.json().catch(() => ({}));
  if (body.outcome === 'acknowledged') showAckResult(`✓ Acknowledged: ${alarmId} by ${user}.`, 'accepted');
  else if (body.outcome === 'refused') showAckResult(`✕ Refused (${body.code}): ${body.reason}`, 'refused');
  else if (body.outcome === 'no_verdict') showAckResult(`? No answer: ${body.reason}`, 'refused');
  else showAckResult(`✕ Not accepted (HTTP ${res.status}): ${body.error ?? 'no reason given'}`, 'refused');
}

function wireAck() {
  const dialog = $('ack-dialog');
  $('alarm-rows').addEventListener('click', (ev) => {
    const b = ev.target.closest('button.ack');
    if (!b) return;
    page.openAlarmId = b.dataset.alarmId;
    $('ack-what').textContent = page.openAlarmId;
    $('ack-dialog-result').textContent = '';
    $('ack-user').value = localStorage.getItem('strainward-user') ?? '';
    $('ack-reason').value = '';
    dialog.showModal();
  });
  $('ack-cancel').addEventListener('click', () => dialog.close());
  $('ack-form').addEventListener('submit', async (ev) => {
    ev.preventDefault();
    const user = $('ack-user').value.trim(), reason = $('ack-reason').value.trim();
    localStorage.setItem('strainward-user', user);
    $('ack-submit').disabled = true;
    $('ack-dialog-result').textContent = 'sent; waiting for the processor’s verdict…';
    try { await sendAck(page.openAlarmId, user, reason); } finally { $('ack-submit').disabled = false; }
  });
}

// ---- event stream -------------------------------------------------------------------------

function connect() {
  const es = new EventSource('events');
  const take = (ev) => {
    page.view = JSON.parse(ev.data);
    page.lastEventAt = Date.now();
    if (page.view.trendS) page.trendMs = page.view.trendS * 1000;
    render();
  };
  es.addEventListener('snapshot', (ev) => {
    page.groups.clear();
    page.fatigueAtMs = null;
    const v = JSON.parse(ev.data);
    buildGroups(v);
    for (const g of v.groups) mergeTrend(page.groups.get(g.id), g.trend);
    for (const g of v.groups) g.trend = [];
    page.view = v;
    page.trendMs = (v.trendS ?? 300) * 1000;
    page.lastEventAt = Date.now();
    render();
  });
  es.addEventListener('update', take);
  es.addEventListener('open', () => { $('link-state').textContent = 'live: connected to the processor'; });
  es.addEventListener('error', () => {
    $('link-state').textContent = '✕ connection to the processor lost: retrying. Everything below is as it was when the connection was lost.';
    $('link-state').className = 'link-state lost';
  });
  setInterval(() => {
    const quiet = (Date.now() - page.lastEventAt) / 1000;
    if (page.lastEventAt === 0) return;
    if (quiet > 5) {
      $('link-state').textContent = `✕ no update from the processor for ${age(quiet)}: the values below are old.`;
      $('link-state').className = 'link-state lost';
    } else {
      $('link-state').textContent = `live: updated ${utc(Date.now())} UTC`;
      $('link-state').className = 'link-state';
    }
  }, 1000);
}

$('filter').addEventListener('input', render);
$('only-attention').addEventListener('change', render);
wireAck();
connect();
