/* garnav plan page: the 3D viewer and the show/hide toggles.
 *
 * Reads the scene embedded in the JSON script element "garnav-scene" (16-bit quantised positions and triangle
 * indices as base64, see garnav/page/encode.py), builds one three.js mesh per part, and draws on
 * demand (after a camera move, a toggle or a resize). Nothing is fetched. When the scene is drawn
 * the viewer element gets data-state="drawn"; without WebGL it gets data-state="no-webgl" and says
 * so in the page.
 */
(function () {
  "use strict";

  var groups = {};
  var redraw = function () {};

  function svgLayers(input, visible) {
    var ids = (input.getAttribute("data-svg") || "").split(" ");
    ids.forEach(function (id) {
      var el = id && document.getElementById(id);
      if (el) { el.style.display = visible ? "" : "none"; }
    });
  }

  function wireToggles() {
    var inputs = document.querySelectorAll("input[data-toggle]");
    Array.prototype.forEach.call(inputs, function (input) {
      input.addEventListener("change", function () {
        var g = groups[input.getAttribute("data-toggle")];
        if (g) { g.visible = input.checked; }
        svgLayers(input, input.checked);
        redraw();
      });
    });
  }

  function bytes(text) {
    var bin = atob(text);
    var out = new Uint8Array(bin.length);
    for (var i = 0; i < bin.length; i++) { out[i] = bin.charCodeAt(i); }
    return out;
  }

  function webglAvailable() {
    try {
      var probe = document.createElement("canvas");
      return !!(window.WebGL2RenderingContext && probe.getContext("webgl2"));
    } catch (e) {
      return false;
    }
  }

  function start() {
    var dataNode = document.getElementById("garnav-scene");
    var host = document.getElementById("viewer");
    var status = document.getElementById("viewer-status");
    if (!dataNode || !host) { return; }
    if (!window.GarnavThree || !webglAvailable()) {
      host.setAttribute("data-state", "no-webgl");
      status.textContent = "This browser cannot draw the 3D view (WebGL 2 is off or missing). " +
        "The pattern sheet and the figures below show the same plan.";
      return;
    }
    var T = window.GarnavThree;
    var data = JSON.parse(dataNode.textContent);
    var o = data.quantisation.origin, st = data.quantisation.step;

    var renderer = new T.WebGLRenderer({ antialias: true, preserveDrawingBuffer: true });
    renderer.setPixelRatio(Math.min(window.devicePixelRatio || 1, 2));
    host.insertBefore(renderer.domElement, host.firstChild);

    var scene = new T.Scene();
    scene.background = new T.Color("#f4f1ec");
    var scale = data.scale_mm;
    var camera = new T.PerspectiveCamera(30, 1, scale * 0.01, scale * 20);
    camera.up.set(data.up[0], data.up[1], data.up[2]);
    scene.add(camera);
    var sky = new T.HemisphereLight(0xffffff, 0x9a8f80, 1.7);
    sky.position.set(0, 0, 1);
    scene.add(sky);
    var head = new T.DirectionalLight(0xffffff, 1.5);
    head.position.set(0.25, 0.4, 0);
    camera.add(head);
    camera.add(head.target);
    head.target.position.set(0, 0, -1);

    var triangles = 0;
    var allVertices = data.parts.reduce(function (n, p) { return n + p.vertex_count; }, 0);
    var every = Math.max(1, Math.ceil(allVertices / 6000));
    var sample = [];  // about 6000 vertices, for fitting the view
    data.parts.forEach(function (p) {
      var q = new Uint16Array(bytes(p.positions).buffer);
      var pos = new Float32Array(q.length);
      for (var i = 0; i < q.length; i += 3) {
        pos[i] = o[0] + q[i] * st[0];
        pos[i + 1] = o[1] + q[i + 1] * st[1];
        pos[i + 2] = o[2] + q[i + 2] * st[2];
        if ((i / 3) % every === 0) { sample.push(new T.Vector3(pos[i], pos[i + 1], pos[i + 2])); }
      }
      var raw = bytes(p.indices).buffer;
      var idx = p.index_bytes === 2 ? new Uint16Array(raw) : new Uint32Array(raw);
      var geom = new T.BufferGeometry();
      geom.setAttribute("position", new T.BufferAttribute(pos, 3));
      geom.setIndex(new T.BufferAttribute(idx, 1));
      geom.computeVertexNormals();
      var params = { color: new T.Color(p.colour), side: T.DoubleSide };
      if (p.opacity < 1) { params.transparent = true; params.opacity = p.opacity; params.depthWrite = false; }
      if (p.overlay) { params.polygonOffset = true; params.polygonOffsetFactor = -2; params.polygonOffsetUnits = -4; }
      var mat = p.shading === "unlit" ? new T.MeshBasicMaterial(params) : new T.MeshLambertMaterial(params);
      var mesh = new T.Mesh(geom, mat);
      mesh.name = p.name;
      if (!groups[p.group]) { groups[p.group] = new T.Group(); scene.add(groups[p.group]); }
      groups[p.group].add(mesh);
      triangles += p.triangle_count;
    });

    // what the toggles say at load (a browser may restore unchecked boxes)
    Array.prototype.forEach.call(document.querySelectorAll("input[data-toggle]"), function (input) {
      var g = groups[input.getAttribute("data-toggle")];
      if (g) { g.visible = input.checked; }
      svgLayers(input, input.checked);
    });

    var centre = new T.Vector3(o[0] + st[0] * 32767.5, o[1] + st[1] * 32767.5, o[2] + st[2] * 32767.5);
    var radius = 0.5 * Math.sqrt(Math.pow(st[0] * 65535, 2) + Math.pow(st[1] * 65535, 2) + Math.pow(st[2] * 65535, 2));

    var labelHost = document.getElementById("viewer-labels");
    var labels = data.landmarks.map(function (lm) {
      var el = document.createElement("span");
      el.className = "lm";
      el.textContent = lm.name;
      labelHost.appendChild(el);
      return { el: el, p: new T.Vector3().fromArray(lm.xyz), n: lm.normal ? new T.Vector3().fromArray(lm.normal) : null };
    });
    var v = new T.Vector3(), toCam = new T.Vector3();

    // Labels of landmarks facing the camera, nearest first; a label that would overlap one
    // already placed is left out (move the view to see it).
    function placeLabels() {
      var w = host.clientWidth, h = host.clientHeight;
      var show = !groups.landmarks || groups.landmarks.visible;
      var todo = [];
      labels.forEach(function (L) {
        var visible = show;
        if (visible && L.n) { toCam.copy(camera.position).sub(L.p); visible = toCam.dot(L.n) > 0; }
        v.copy(L.p).project(camera);
        if (!visible || v.z > 1 || Math.abs(v.x) > 1 || Math.abs(v.y) > 1) { L.el.style.display = "none"; return; }
        todo.push({ L: L, x: (v.x + 1) / 2 * w, y: (1 - v.y) / 2 * h, z: v.z });
      });
      todo.sort(function (a, b) { return a.z - b.z; });
      var placed = [];
      todo.forEach(function (t) {
        t.L.el.style.display = "";
        var bw = t.L.el.offsetWidth, bh = t.L.el.offsetHeight;
        var left = t.x + 8 + bw > w;  // no room on the right: put the label left of its point
        var x0 = left ? t.x - 8 - bw : t.x + 8, y0 = t.y - bh / 2;
        var box = { x0: x0, y0: y0, x1: x0 + bw, y1: y0 + bh };
        var clash = placed.some(function (b) { return box.x0 < b.x1 && b.x0 < box.x1 && box.y0 < b.y1 && b.y0 < box.y1; });
        if (clash) { t.L.el.style.display = "none"; return; }
        placed.push(box);
        t.L.el.style.transform = "translate(" + x0.toFixed(1) + "px," + y0.toFixed(1) + "px)";
      });
    }

    var controls = new T.OrbitControls(camera, renderer.domElement);
    controls.target.copy(centre);
    controls.minDistance = scale * 0.05;
    controls.maxDistance = scale * 6;

    var pending = false;
    function render() {
      pending = false;
      renderer.render(scene, camera);
      placeLabels();
      if (host.getAttribute("data-state") !== "drawn") {
        host.setAttribute("data-state", "drawn");
        host.setAttribute("data-triangles", String(triangles));
        status.textContent = "";
        status.style.display = "none";
      }
    }
    redraw = function () {
      if (!pending) { pending = true; window.requestAnimationFrame(render); }
    };
    controls.addEventListener("change", redraw);

    function setView(name) {
      var dir = new T.Vector3().fromArray(data.views[name] || data.views.front).normalize();
      var vfov = camera.fov * Math.PI / 180;
      var hfov = 2 * Math.atan(Math.tan(vfov / 2) * camera.aspect);
      // aim at the middle of the sampled vertices as seen from dir, then back off to the nearest
      // distance at which all of them are in the frustum
      var up = new T.Vector3().fromArray(data.up);
      var right = new T.Vector3().crossVectors(up, dir).normalize();
      var upv = new T.Vector3().crossVectors(dir, right);
      var tv = Math.tan(vfov / 2), th = Math.tan(hfov / 2), c = new T.Vector3();
      var xr = [Infinity, -Infinity], yr = [Infinity, -Infinity];
      sample.forEach(function (p) {
        c.copy(p).sub(centre);
        var x = c.dot(right), y = c.dot(upv);
        xr = [Math.min(xr[0], x), Math.max(xr[1], x)];
        yr = [Math.min(yr[0], y), Math.max(yr[1], y)];
      });
      var aim = centre.clone().addScaledVector(right, (xr[0] + xr[1]) / 2).addScaledVector(upv, (yr[0] + yr[1]) / 2);
      var dist = radius * 0.2;
      sample.forEach(function (p) {
        c.copy(p).sub(aim);
        var z = c.dot(dir);
        dist = Math.max(dist, z + Math.abs(c.dot(right)) / th, z + Math.abs(c.dot(upv)) / tv);
      });
      dist *= 1.06;
      camera.position.copy(aim).addScaledVector(dir, dist);
      controls.target.copy(aim);
      controls.update();
      redraw();
    }

    var view = "front";
    function resize() {
      var w = Math.max(host.clientWidth, 1), h = Math.max(host.clientHeight, 1);
      renderer.setSize(w, h, false);
      camera.aspect = w / h;
      camera.updateProjectionMatrix();
      redraw();
    }
    Array.prototype.forEach.call(document.querySelectorAll("button[data-view]"), function (b) {
      b.addEventListener("click", function () { view = b.getAttribute("data-view"); setView(view); });
    });
    if (window.ResizeObserver) { new ResizeObserver(resize).observe(host); } else { window.addEventListener("resize", resize); }
    resize();
    setView(view);
    render();
  }

  function wireSheetZoom() {
    var wrap = document.querySelector(".sheet-wrap");
    Array.prototype.forEach.call(document.querySelectorAll("button[data-zoom]"), function (b) {
      b.addEventListener("click", function () {
        wrap.style.setProperty("--zoom", b.getAttribute("data-zoom"));
        Array.prototype.forEach.call(document.querySelectorAll("button[data-zoom]"), function (o) {
          o.setAttribute("aria-pressed", o === b ? "true" : "false");
        });
      });
    });
  }

  wireToggles();
  wireSheetZoom();
  start();
})();
