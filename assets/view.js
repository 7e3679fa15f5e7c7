// The report page's 3D view. Unpacks three.js, its orbit controls and the
// scene (zlib + base64 in the page: nothing is fetched), draws the board
// with the simulated deviation painted on it and each setup's toolpaths,
// and wires the switches. Opened as `index.html#view-check`, it also checks
// itself (the board's silhouette from above, a switch that changes the
// picture and puts it back) and writes what it found into #view-check.
(async () => {
  const status = document.getElementById('view-status');
  const holder = document.getElementById('view');
  const report = document.getElementById('view-check');
  try {
    if (!window.DecompressionStream) {
      throw new Error('this browser cannot unpack the view (no DecompressionStream)');
    }
    const unpack = async (id) => {
      const text = document.getElementById(id).textContent.trim();
      const bytes = Uint8Array.from(atob(text), (c) => c.charCodeAt(0));
      const stream = new Blob([bytes]).stream().pipeThrough(new DecompressionStream('deflate'));
      return new Response(stream).arrayBuffer();
    };
    const module = (text) => URL.createObjectURL(new Blob([text], { type: 'text/javascript' }));
    const decoder = new TextDecoder();
    const threeUrl = module(decoder.decode(await unpack('three-js')));
    const orbitText = decoder.decode(await unpack('orbit-js'));
    const orbitUrl = module(orbitText.replace("from 'three'", "from '" + threeUrl + "'"));
    const THREE = await import(threeUrl);
    const { OrbitControls } = await import(orbitUrl);
    const index = JSON.parse(document.getElementById('scene-index').textContent);
    const data = await unpack('scene-data');
    const floats = ([at, n]) => new Float32Array(data, at, n);
    const u32 = ([at, n]) => new Uint32Array(data, at, n);
    const bytes = ([at, n]) => new Uint8Array(data, at, n);

    const width = holder.clientWidth || 1000;
    const height = Math.round(width * 0.55);
    const renderer = new THREE.WebGLRenderer({ antialias: true, preserveDrawingBuffer: true });
    renderer.setPixelRatio(1);
    renderer.setSize(width, height);
    holder.appendChild(renderer.domElement);
    const BACKGROUND = [0xdd, 0xe2, 0xe8];
    const background = new THREE.Color(0xdde2e8);
    const scene = new THREE.Scene();
    scene.background = background;
    scene.add(new THREE.HemisphereLight(0xffffff, 0x606060, 0.7));
    const sun = new THREE.DirectionalLight(0xffffff, 1.8);
    sun.position.set(-0.3, 1, 0.5);
    scene.add(sun);
    const fill = new THREE.DirectionalLight(0xffffff, 0.6);
    fill.position.set(0.5, -0.6, -0.4);
    scene.add(fill);
    // The board's coordinates have Z up; three.js has Y up.
    const world = new THREE.Group();
    world.rotation.x = -Math.PI / 2;
    scene.add(world);

    const geometry = new THREE.BufferGeometry();
    geometry.setAttribute('position', new THREE.BufferAttribute(floats(index.board.vertices), 3));
    geometry.setIndex(new THREE.BufferAttribute(u32(index.board.triangles), 1));
    geometry.computeVertexNormals();
    const painted = Boolean(index.board.colours);
    if (painted) {
      geometry.setAttribute('color', new THREE.BufferAttribute(bytes(index.board.colours), 3, true));
    }
    const plain = new THREE.MeshStandardMaterial({ color: 0xece2c8, roughness: 0.85, side: THREE.DoubleSide });
    const deviation = new THREE.MeshStandardMaterial({ vertexColors: true, roughness: 0.85, side: THREE.DoubleSide });
    const board = new THREE.Mesh(geometry, painted ? deviation : plain);
    world.add(board);

    const paths = (index.paths || []).map((g) => {
      const points = floats(g.points);
      const starts = Array.from(u32(g.starts));
      const n = points.length / 3;
      const pairs = [];
      for (let k = 0; k < starts.length; k++) {
        const end = k + 1 < starts.length ? starts[k + 1] : n;
        for (let i = starts[k]; i + 1 < end; i++) pairs.push(i, i + 1);
      }
      const lines = new THREE.BufferGeometry();
      lines.setAttribute('position', new THREE.BufferAttribute(points, 3));
      lines.setIndex(pairs);
      const object = new THREE.LineSegments(lines, new THREE.LineBasicMaterial({ color: g.colour }));
      object.visible = false;
      world.add(object);
      return { group: g, object };
    });

    geometry.computeBoundingBox();
    const box = geometry.boundingBox;
    const centre = new THREE.Vector3();
    box.getCenter(centre);
    const size = new THREE.Vector3();
    box.getSize(size);
    const target = new THREE.Vector3(centre.x, centre.z, -centre.y);
    const camera = new THREE.PerspectiveCamera(35, width / height, 1, 50000);
    const controls = new OrbitControls(camera, renderer.domElement);
    const render = () => renderer.render(scene, camera);
    controls.addEventListener('change', render);
    const look = (dir, up) => {
      const d = Math.max(size.x, size.y) * 1.05;
      camera.up.set(up[0], up[1], up[2]);
      camera.position.set(target.x + dir[0] * d, target.y + dir[1] * d, target.z + dir[2] * d);
      controls.target.copy(target);
      controls.update();
      render();
    };
    const views = {
      'three quarters': () => look([-0.3, 0.75, 0.6], [0, 1, 0]),
      deck: () => look([0, 1, 0.0001], [0, 0, -1]),
      bottom: () => look([0, -1, 0.0001], [0, 0, 1]),
      side: () => look([0, 0.0001, 1], [0, 1, 0]),
    };

    // The switches.
    const switches = document.getElementById('view-switches');
    const row = (title) => {
      const p = document.createElement('div');
      const b = document.createElement('b');
      b.textContent = title + ': ';
      p.appendChild(b);
      switches.appendChild(p);
      return p;
    };
    const toggle = (parent, label, on, change, colour) => {
      const l = document.createElement('label');
      l.style.marginRight = '1em';
      const c = document.createElement('input');
      c.type = 'checkbox';
      c.checked = on;
      c.dataset.view = label;
      c.addEventListener('change', () => { change(c.checked); render(); });
      l.appendChild(c);
      if (colour) {
        const s = document.createElement('span');
        s.style.cssText = 'display:inline-block;width:1em;height:0.6em;margin:0 0.3em;background:' + colour;
        l.appendChild(s);
      }
      l.appendChild(document.createTextNode(label));
      parent.appendChild(l);
      return c;
    };
    const viewRow = row('view from');
    for (const [name, go] of Object.entries(views)) {
      const b = document.createElement('button');
      b.textContent = name;
      b.style.marginRight = '0.5em';
      b.addEventListener('click', go);
      viewRow.appendChild(b);
    }
    const show = row('show');
    toggle(show, 'board', true, (on) => { board.visible = on; });
    if (painted) {
      toggle(show, 'deviation colours', true, (on) => { board.material = on ? deviation : plain; });
    }
    const setupOn = { 1: true, 2: true };
    const labelOn = {};
    const refresh = () => {
      for (const p of paths) p.object.visible = setupOn[p.group.setup] && Boolean(labelOn[p.group.label]);
    };
    if (paths.length) {
      const setups = row('toolpaths of');
      for (const s of [...new Set(paths.map((p) => p.group.setup))]) {
        const name = s === 1 ? 'setup 1 (deck up)' : 'setup 2 (bottom up)';
        toggle(setups, name, true, (on) => { setupOn[s] = on; refresh(); });
      }
      const ops = row('operations');
      for (const p of paths) {
        if (p.group.label in labelOn) continue;
        labelOn[p.group.label] = false;
        toggle(ops, p.group.label, false, (on) => { labelOn[p.group.label] = on; refresh(); }, p.group.colour);
      }
      refresh();
    }
    views['three quarters']();
    status.textContent = 'Drag to turn, scroll to zoom, right-drag to move.';

    if (location.hash === '#view-check') {
      const gl = renderer.getContext();
      const pixels = () => {
        render();
        const px = new Uint8Array(width * height * 4);
        gl.readPixels(0, 0, width, height, gl.RGBA, gl.UNSIGNED_BYTE, px);
        return px;
      };
      const bg = BACKGROUND;
      const isBg = (px, i) => Math.abs(px[i] - bg[0]) + Math.abs(px[i + 1] - bg[1]) + Math.abs(px[i + 2] - bg[2]) < 12;
      // From straight above with a camera that does not foreshorten, the
      // board's pixels span its length and width.
      const half = Math.max(size.x / width, size.y / height) * 0.55;
      const top = new THREE.OrthographicCamera(-half * width, half * width, half * height, -half * height, 1, 50000);
      top.position.set(target.x, target.y + 10000, target.z);
      top.up.set(0, 0, -1);
      top.lookAt(target);
      const was = paths.map((p) => p.object.visible);
      for (const p of paths) p.object.visible = false;
      renderer.render(scene, top);
      const px = new Uint8Array(width * height * 4);
      gl.readPixels(0, 0, width, height, gl.RGBA, gl.UNSIGNED_BYTE, px);
      let [x0, x1, y0, y1, count] = [width, -1, height, -1, 0];
      for (let y = 0; y < height; y++) {
        for (let x = 0; x < width; x++) {
          if (!isBg(px, (y * width + x) * 4)) {
            count++;
            x0 = Math.min(x0, x); x1 = Math.max(x1, x); y0 = Math.min(y0, y); y1 = Math.max(y1, y);
          }
        }
      }
      paths.forEach((p, k) => { p.object.visible = was[k]; });
      // A switch changes the picture, and switching it back restores it.
      const before = pixels();
      const label = paths.some((p) => p.group.label === 'finishing') ? 'finishing' : paths.length ? paths[0].group.label : 'board';
      const first = switches.querySelector('input[data-view="' + label + '"]');
      first.click();
      const during = pixels();
      first.click();
      const after = pixels();
      let changed = 0;
      let restored = true;
      for (let i = 0; i < before.length; i += 4) {
        if (before[i] !== during[i] || before[i + 1] !== during[i + 1] || before[i + 2] !== during[i + 2]) changed++;
        if (before[i] !== after[i] || before[i + 1] !== after[i + 1] || before[i + 2] !== after[i + 2]) restored = false;
      }
      report.textContent = JSON.stringify({
        drawn: true,
        revision: THREE.REVISION,
        pixels: count,
        silhouette_mm: [(x1 - x0 + 1) * 2 * half, (y1 - y0 + 1) * 2 * half],
        board_mm: [size.x, size.y],
        switch: first.dataset.view,
        switch_changed_pixels: changed,
        switch_restored: restored,
        paths: paths.length,
        painted,
      });
    }
  } catch (e) {
    status.textContent = 'The 3D view could not be drawn in this browser (' + e.message + '); the drawings below show the same board.';
    if (report) report.textContent = JSON.stringify({ drawn: false, error: String(e) });
  }
})();
