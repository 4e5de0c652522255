// thickpanel report viewer: the fold of an array in three.js (vendored, see export/vendor/README.md).
// Data: #tp-view-data (JSON written by thickpanel/export/report_view.py). Lengths in mm, z up.
import * as THREE from 'three';
import { OrbitControls } from 'three/addons/controls/OrbitControls.js';

const D = JSON.parse(document.getElementById('tp-view-data').textContent);
const canvas = document.getElementById('tp-canvas');
const tip = document.getElementById('tp-tip');
const info = document.getElementById('tp-info');
const slider = document.getElementById('tp-t');
const tval = document.getElementById('tp-tval');
const closest = document.getElementById('tp-closest');
const plot = document.getElementById('tp-clr');

function b64(s, Type) {
  const bin = atob(s);
  const bytes = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) bytes[i] = bin.charCodeAt(i);
  return new Type(bytes.buffer);
}
const esc = (s) => String(s).replace(/[&<>"]/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;' }[c]));

const renderer = new THREE.WebGLRenderer({ canvas, antialias: true, preserveDrawingBuffer: true });
renderer.setPixelRatio(window.devicePixelRatio || 1);
const scene = new THREE.Scene();
scene.background = new THREE.Color(0xfafafa);
const camera = new THREE.PerspectiveCamera(35, 1, 1, 1e6);
camera.up.set(0, 0, 1);
scene.add(camera);
scene.add(new THREE.AmbientLight(0xffffff, 0.55));
const lamp = new THREE.DirectionalLight(0xffffff, 1.6);
lamp.position.set(0.4, 0.6, 1.0);
camera.add(lamp);
scene.add(new THREE.HemisphereLight(0xffffff, 0x888888, 0.6));

// poses: samples x nposes x 16, row-major; pre-decomposed to position + quaternion
const NS = D.t.length, NP = D.nposes;
const P = b64(D.poses, Float32Array);
const pos = [], quat = [];
for (let s = 0; s < NS; s++) {
  const ps = [], qs = [];
  for (let k = 0; k < NP; k++) {
    const o = (s * NP + k) * 16;
    const m = new THREE.Matrix4().set(...Array.from(P.subarray(o, o + 16)));
    const p = new THREE.Vector3(), q = new THREE.Quaternion(), sc = new THREE.Vector3();
    m.decompose(p, q, sc);
    ps.push(p); qs.push(q);
  }
  pos.push(ps); quat.push(qs);
}

const base = new THREE.MeshStandardMaterial({ color: 0xc9ced8, flatShading: true, side: THREE.DoubleSide,
  metalness: 0.0, roughness: 0.85, polygonOffset: true, polygonOffsetFactor: 1, polygonOffsetUnits: 1 });
const pickedMat = base.clone(); pickedMat.color.set(0xf2c14e);
const pairMat = base.clone(); pairMat.color.set(0xd9534f);
const edgeMat = new THREE.LineBasicMaterial({ color: 0x222222 });
const hingeMat = new THREE.LineBasicMaterial({ color: 0x0044cc, linewidth: 2, depthTest: false });
const meshes = [], byId = {};
const box = new THREE.Box3();
for (const part of D.parts) {
  const g = new THREE.BufferGeometry();
  g.setAttribute('position', new THREE.BufferAttribute(b64(part.v, Float32Array), 3));
  g.setIndex(new THREE.BufferAttribute(b64(part.f, Uint32Array), 1));
  g.computeBoundingBox();
  g.computeBoundingSphere();
  const mesh = new THREE.Mesh(g, base);
  mesh.matrixAutoUpdate = false;
  mesh.userData.part = part;
  mesh.add(new THREE.LineSegments(new THREE.EdgesGeometry(g, 20), edgeMat));
  if (part.segs.length) {
    const hg = new THREE.BufferGeometry();
    hg.setAttribute('position', new THREE.BufferAttribute(new Float32Array(part.segs.flat()), 3));
    const hl = new THREE.LineSegments(hg, hingeMat);
    hl.visible = false; hl.renderOrder = 2;
    mesh.userData.hinges = hl;
    mesh.add(hl);
  }
  scene.add(mesh);
  meshes.push(mesh);
  byId[part.id] = mesh;
  box.union(g.boundingBox);
}

// frame the flat sheet and keep the frame for every state (extents of all samples)
for (let s = 0; s < NS; s += Math.max(1, Math.floor(NS / 8))) {
  for (const m of meshes) {
    const k = m.userData.part.pose;
    const M = new THREE.Matrix4().compose(pos[s][k], quat[s][k], new THREE.Vector3(1, 1, 1));
    box.union(m.geometry.boundingBox.clone().applyMatrix4(M));
  }
}
const centre = box.getCenter(new THREE.Vector3());
const radius = Math.max(box.getSize(new THREE.Vector3()).length() / 2, 1e-3);
const controls = new OrbitControls(camera, canvas);
controls.target.copy(centre);
const dir = new THREE.Vector3(0.55, -0.95, 0.75).normalize();
camera.position.copy(centre).addScaledVector(dir, radius * 2.3);
camera.near = radius / 100; camera.far = radius * 100;
controls.update();

let T = 0, picked = null, pair = [];
function clearanceAt(t) {
  const c = D.clearance;
  if (!c.t.length) return null;
  let best = 0;
  for (let i = 1; i < c.t.length; i++) if (Math.abs(c.t[i] - t) < Math.abs(c.t[best] - t)) best = i;
  return { t: c.t[best], c: c.c[best], pair: c.pair[best], beyond: c.beyond[best] };
}

function paint() {
  for (const m of meshes) {
    const id = m.userData.part.id;
    m.material = m === picked ? pickedMat : (pair.includes(id) ? pairMat : base);
    if (m.userData.hinges) m.userData.hinges.visible = m === picked;
  }
}

function setT(t) {
  T = Math.min(1, Math.max(0, t));
  const ts = D.t;
  let i = 0;
  while (i + 1 < NS && ts[i + 1] <= T) i++;
  const j = Math.min(i + 1, NS - 1);
  const w = j > i ? Math.min(1, Math.max(0, (T - ts[i]) / (ts[j] - ts[i]))) : 0;
  const p = new THREE.Vector3(), q = new THREE.Quaternion(), one = new THREE.Vector3(1, 1, 1);
  for (const m of meshes) {
    const k = m.userData.part.pose;
    p.lerpVectors(pos[i][k], pos[j][k], w);
    q.slerpQuaternions(quat[i][k], quat[j][k], w);
    m.matrix.compose(p, q, one);
    m.matrixWorldNeedsUpdate = true;
  }
  slider.value = String(Math.round(T * 1000));
  tval.textContent = 't = ' + T.toFixed(3) + (T > ts[NS - 1] + 1e-9 ? ' (path ends at t = ' + ts[NS - 1].toFixed(3) + ')' : '');
  const row = clearanceAt(T);
  pair = row && row.pair ? row.pair : [];
  if (row) {
    closest.textContent = row.pair
      ? 'Closest pair at the sweep state t = ' + row.t.toFixed(3) + ': ' + row.pair[0] + ' and ' + row.pair[1]
        + ' (marked), clearance ' + (row.c === null ? 'beyond the search margin' : row.c.toFixed(3) + ' mm') + '.'
      : (row.beyond
        ? 'At the sweep state t = ' + row.t.toFixed(3) + ' no two slabs come within the ' + D.margin
          + ' mm search margin: clearance at least ' + D.margin + ' mm, no closest pair measured.'
        : 'No pair of slabs counted at t = ' + row.t.toFixed(3) + '.');
  } else {
    closest.textContent = 'No clearance sweep in this build.';
  }
  paint();
  drawPlot();
  render();
}

function render() {
  const w = canvas.clientWidth, h = canvas.clientHeight;
  if (canvas.width !== Math.round(w * renderer.getPixelRatio()) || canvas.height !== Math.round(h * renderer.getPixelRatio())) {
    renderer.setSize(w, h, false);
    camera.aspect = w / h;
    camera.updateProjectionMatrix();
  }
  renderer.render(scene, camera);
}
controls.addEventListener('change', render);
window.addEventListener('resize', () => { render(); drawPlot(); });

// picking: hover shows the id, a click (without drag) shows the part's description
const ray = new THREE.Raycaster();
function pickAt(cx, cy) {
  const r = canvas.getBoundingClientRect();
  const ndc = new THREE.Vector2(((cx - r.left) / r.width) * 2 - 1, -((cy - r.top) / r.height) * 2 + 1);
  ray.setFromCamera(ndc, camera);
  const hit = ray.intersectObjects(meshes, false)[0];
  return hit ? hit.object : null;
}
function describe(m) {
  if (!m) { info.textContent = 'Click a part to see its id, area, thickness and hinge lines.'; return; }
  const p = m.userData.part;
  const rows = p.hinges.map((h) => '<tr><td>' + esc(h.crease) + '</td><td>' + esc(h.other) + '</td><td>' + esc(h.face)
    + '</td><td class="num">' + h.gap + '</td><td class="num">' + h.usable + '</td></tr>').join('');
  info.innerHTML = '<b id="tp-picked">' + esc(p.id) + '</b> (' + esc(p.kind) + '): area ' + p.area.toFixed(1)
    + ' mm², thickness ' + p.thickness + ' mm' + (p.volume !== null ? ', volume ' + p.volume.toFixed(1) + ' mm³' : '')
    + '; ' + p.hinges.length + ' hinge lines (drawn in blue).'
    + (rows ? '<table><tr><th>crease</th><th>to panel</th><th>hinge face</th><th>gap (mm)</th><th>usable length (mm)</th></tr>'
      + rows + '</table>' : '');
}
let down = null;
canvas.addEventListener('pointerdown', (e) => { down = [e.clientX, e.clientY]; });
canvas.addEventListener('pointerup', (e) => {
  if (down && Math.hypot(e.clientX - down[0], e.clientY - down[1]) < 5) {
    picked = pickAt(e.clientX, e.clientY);
    describe(picked);
    paint();
    render();
  }
  down = null;
});
canvas.addEventListener('pointermove', (e) => {
  const m = pickAt(e.clientX, e.clientY);
  if (!m) { tip.style.display = 'none'; return; }
  const r = canvas.getBoundingClientRect();
  tip.textContent = m.userData.part.id;
  tip.style.left = (e.clientX - r.left + 12) + 'px';
  tip.style.top = (e.clientY - r.top + 12) + 'px';
  tip.style.display = 'block';
});
canvas.addEventListener('pointerleave', () => { tip.style.display = 'none'; });

// clearance against fold fraction, the state shown marked
function drawPlot() {
  const c = D.clearance;
  const dpr = window.devicePixelRatio || 1;
  const W = plot.clientWidth, H = plot.clientHeight;
  plot.width = Math.round(W * dpr); plot.height = Math.round(H * dpr);
  const g = plot.getContext('2d');
  g.setTransform(dpr, 0, 0, dpr, 0, 0);
  g.clearRect(0, 0, W, H);
  g.font = '12px system-ui, sans-serif';
  g.fillStyle = '#222';
  const L = 64, R = 12, Tp = 18, B = 30;
  const vals = c.c.filter((v) => v !== null);
  if (!vals.length) { g.fillText('No clearance sweep in this build.', L, H / 2); return; }
  let lo = Math.min(D.required, ...vals), hi = Math.max(D.required, ...vals);
  if (hi - lo < 1e-9) { hi += 1; lo -= 1; }
  const pad = 0.08 * (hi - lo); lo -= pad; hi += pad;
  const X = (t) => L + t * (W - L - R), Y = (v) => Tp + (hi - v) / (hi - lo) * (H - Tp - B);
  g.strokeStyle = '#999'; g.lineWidth = 1;
  g.strokeRect(L, Tp, W - L - R, H - Tp - B);
  for (let k = 0; k <= 4; k++) {
    const v = lo + (hi - lo) * k / 4;
    g.fillText(v.toFixed(2), 6, Y(v) + 4);
    g.fillText((k / 4).toFixed(2), X(k / 4) - 12, H - 12);
  }
  g.fillText('clearance (mm) against fold fraction t; dashed: required ' + D.required + ' mm'
    + (D.margin !== null ? '; capped at the ' + D.margin + ' mm search margin (a bound: at least this)' : ''), L + 6, 13);
  g.setLineDash([6, 4]); g.strokeStyle = '#555';
  g.beginPath(); g.moveTo(X(0), Y(D.required)); g.lineTo(X(1), Y(D.required)); g.stroke();
  g.setLineDash([]); g.strokeStyle = '#111'; g.lineWidth = 1.6;
  g.beginPath();
  let pen = false;
  c.t.forEach((t, i) => {
    const v = c.c[i];
    if (v === null) { pen = false; return; }
    if (pen) g.lineTo(X(t), Y(v)); else g.moveTo(X(t), Y(v));
    pen = true;
  });
  g.stroke();
  const row = clearanceAt(T);
  g.strokeStyle = '#d9534f'; g.lineWidth = 2;
  g.beginPath(); g.moveTo(X(T), Tp); g.lineTo(X(T), H - B); g.stroke();
  if (row && row.c !== null) {
    g.fillStyle = '#d9534f';
    g.beginPath(); g.arc(X(row.t), Y(row.c), 5, 0, 2 * Math.PI); g.fill();
  }
}

slider.addEventListener('input', () => setT(Number(slider.value) / 1000));
let playing = false, last = 0;
const play = document.getElementById('tp-play');
function step(now) {
  if (!playing) return;
  const dt = last ? (now - last) / 1000 : 0;
  last = now;
  let t = T + dt / 6;  // six seconds for the whole fold
  if (t >= 1) { t = 1; playing = false; play.textContent = 'play'; }
  setT(t);
  if (playing) requestAnimationFrame(step);
}
play.addEventListener('click', () => {
  playing = !playing;
  play.textContent = playing ? 'pause' : 'play';
  if (playing) { if (T >= 1) setT(0); last = 0; requestAnimationFrame(step); }
});

// a small hook for tests and scripts
window.tpView = {
  setT,
  get t() { return T; },
  ids: () => meshes.map((m) => m.userData.part.id),
  screenOf(id) {
    const m = byId[id];
    if (!m) return null;
    const a = m.geometry.attributes.position, c = new THREE.Vector3();
    for (let i = 0; i < a.count; i++) c.add(new THREE.Vector3().fromBufferAttribute(a, i));
    c.multiplyScalar(1 / a.count).applyMatrix4(m.matrixWorld).project(camera);
    const r = canvas.getBoundingClientRect();
    return [r.left + (c.x + 1) / 2 * r.width, r.top + (1 - c.y) / 2 * r.height];
  },
  pickAt: (x, y) => { const m = pickAt(x, y); return m ? m.userData.part.id : null; },
  ready: true,
};
setT(0);
