// replay.js: draws a chart's display list on its canvas (the page's second
// module, after web/util.js; web/core.js hands it to the core with
// `setCanvasReplay`). The core records what a chart draws and encodes it as a
// command buffer (crates/web/src/commands.rs: opcodes and counts in a
// Uint32Array, coordinates in a Float64Array, both views of WebAssembly
// memory, plus the strings this table does not hold yet); this loop makes the
// canvas calls, in the order and with the arguments the core encoded. One
// call from the core per chart instead of one per canvas call: the calls
// through wasm-bindgen cost more than the drawing (docs/page.md "Draw fast").
//
// A map's cells (an IMAGE command) go on a canvas of their own stacked under
// the chart's (`<canvas id="ID-under">`, web/index.html, style.css `.layered`)
// with one putImageData; the chart canvas gets a transparent hole there
// (clearRect) and draws its frame, lines and labels on top, so the screen
// shows the two composited. Only opaque images go there (a transparent pixel
// would show the layer's background, not what the chart drew below it).
// Without such a canvas (the chi-square map, or `layered` false) the image is
// put on a scratch canvas and drawn onto the chart with drawImage, as one
// canvas. `Replay.pixels(canvas)` returns the
// composited pixels of a chart either way (tests, pictures).

const Replay = (() => {
  // Opcodes: crates/web/src/commands.rs `op`, same numbers.
  const STROKE_STYLE = 1, LINE_WIDTH = 2, FILL_STYLE = 3, FONT = 4, TEXT_ALIGN = 5,
    TEXT_BASELINE = 6, STROKE_PATHS = 7, STROKE_RECT = 8, FILL_RECT = 9, FILL_POLYGONS = 10,
    CIRCLES = 11, FILL = 12, STROKE = 13, TEXT = 14, TEXT_ROTATED = 15, IMAGE = 16;
  const ALIGN = ["start", "end", "center"];
  const BASELINE = ["top", "middle", "bottom"];
  const TAU = 2 * Math.PI;

  // The strings the core sent, by id (CSS colours, fonts, texts).
  const strings = [];
  // Per chart canvas: a canvas never shown, for images drawn onto one canvas.
  const scratch = new WeakMap();
  // Per layer under a chart: the rectangles of the images it holds.
  const placed = new WeakMap();

  function layerUnder(canvas) {
    const under = document.getElementById(canvas.id + "-under");
    return under instanceof HTMLCanvasElement ? under : null;
  }

  // Puts an image: on the layer under the chart canvas (`under`, when the image is opaque),
  // leaving a transparent hole in the chart canvas, or else on a scratch canvas drawn onto
  // the chart. `onLayer` collects what went on the layer in this replay.
  function putImage(c, canvas, under, onLayer, memory, ptr, len, w, h, opaque, x, y) {
    const pixels = new ImageData(new Uint8ClampedArray(memory.buffer, ptr, len), w, h);
    if (under && opaque) {
      if (under.width !== canvas.width || under.height !== canvas.height) {
        under.width = canvas.width;
        under.height = canvas.height;
        placed.delete(under);
      }
      under.getContext("2d").putImageData(pixels, x, y);
      onLayer.push({ pixels, x, y, w, h });
      c.clearRect(x, y, w, h);
      return;
    }
    let s = scratch.get(canvas);
    if (!s) { s = document.createElement("canvas"); scratch.set(canvas, s); }
    if (s.width !== w || s.height !== h) { s.width = w; s.height = h; }
    s.getContext("2d").putImageData(pixels, 0, 0);
    c.drawImage(s, x, y);
  }

  // After a replay: the layer holds exactly this replay's images. When they are not where the
  // last replay put its images (a new layout, or fewer images), the layer is cleared and they
  // are put again (the image data are still valid views of the core's memory here).
  function settleLayer(under, onLayer) {
    const key = onLayer.map((r) => `${r.x},${r.y},${r.w},${r.h}`).join(";");
    const last = placed.get(under);
    if (last === key) return;
    if (last !== undefined && last !== "") {
      const u = under.getContext("2d");
      u.clearRect(0, 0, under.width, under.height);
      for (const r of onLayer) u.putImageData(r.pixels, r.x, r.y);
    }
    placed.set(under, key);
  }

  /**
   * Draws one encoded display list on `canvas` (called by the core, crates/web/src/canvas.rs
   * `replay`). `reset`: empty the string table first; `lengths`/`text`: the new strings (UTF-16
   * lengths, concatenated), whose first id is `first`; `memory`: the core's WebAssembly memory
   * (images are read from it at the addresses in `words`).
   */
  function replay(canvas, layered, words, numbers, lengths, text, first, reset, memory) {
    if (reset) strings.length = 0;
    if (strings.length !== first) throw new Error(`the canvas string table is out of step (${strings.length} strings, the core expects ${first})`);
    for (let k = 0, at = 0; k < lengths.length; k++) {
      strings.push(text.slice(at, at + lengths[k]));
      at += lengths[k];
    }
    const c = canvas.getContext("2d");
    const under = layered ? layerUnder(canvas) : null;
    const onLayer = [];
    // Whether a rotated text's transform is still set (TEXT_ROTATED).
    let turned = false;
    const n = words.length;
    let i = 0;
    let j = 0;
    while (i < n) {
      switch (words[i++]) {
        case STROKE_STYLE: c.strokeStyle = strings[words[i++]]; break;
        case LINE_WIDTH: c.lineWidth = numbers[j++]; break;
        case FILL_STYLE: c.fillStyle = strings[words[i++]]; break;
        case FONT: c.font = strings[words[i++]]; break;
        case TEXT_ALIGN: c.textAlign = ALIGN[words[i++]]; break;
        case TEXT_BASELINE: c.textBaseline = BASELINE[words[i++]]; break;
        case STROKE_PATHS:
        case FILL_POLYGONS: {
          const fill = words[i - 1] === FILL_POLYGONS;
          const paths = words[i++];
          c.beginPath();
          for (let p = 0; p < paths; p++) {
            const points = words[i++];
            if (points === 0) continue;
            c.moveTo(numbers[j], numbers[j + 1]);
            j += 2;
            for (let q = 1; q < points; q++, j += 2) c.lineTo(numbers[j], numbers[j + 1]);
            if (fill) c.closePath();
          }
          if (fill) c.fill(); else c.stroke();
          break;
        }
        case STROKE_RECT: c.strokeRect(numbers[j], numbers[j + 1], numbers[j + 2], numbers[j + 3]); j += 4; break;
        case FILL_RECT: c.fillRect(numbers[j], numbers[j + 1], numbers[j + 2], numbers[j + 3]); j += 4; break;
        case CIRCLES: {
          const count = words[i++];
          c.beginPath();
          for (let p = 0; p < count; p++, j += 3) {
            const x = numbers[j], y = numbers[j + 1], r = numbers[j + 2];
            c.moveTo(x + r, y);
            c.arc(x, y, r, 0, TAU);
          }
          break;
        }
        case FILL: c.fill(); break;
        case STROKE: c.stroke(); break;
        case TEXT: c.fillText(strings[words[i++]], numbers[j], numbers[j + 1]); j += 2; break;
        case TEXT_ROTATED: {
          // As plotters-canvas: rotated about the anchor. A quarter turn (the charts' only
          // rotations) is set as the exact matrix the canvas makes of translate + rotate (it
          // snaps the sine and cosine of a quarter turn to 0 and +-1), and the identity is set
          // back after a run of rotated texts: the replay draws with no other transform, so
          // this is save/translate/rotate/restore in two calls (same pixels).
          const x = numbers[j], y = numbers[j + 1], angle = numbers[j + 2];
          const co = Math.round(Math.cos(angle)), si = Math.round(Math.sin(angle));
          if (Math.abs(Math.cos(angle) - co) < 1e-9 && Math.abs(Math.sin(angle) - si) < 1e-9) {
            c.setTransform(co, si, -si, co, x, y);
            c.fillText(strings[words[i++]], 0, 0);
            turned = true;
            if (words[i] !== TEXT_ROTATED) {
              c.setTransform(1, 0, 0, 1, 0, 0);
              turned = false;
            }
          } else {
            if (turned) {
              c.setTransform(1, 0, 0, 1, 0, 0);
              turned = false;
            }
            c.save();
            c.translate(x, y);
            c.rotate(angle);
            c.fillText(strings[words[i++]], 0, 0);
            c.restore();
          }
          j += 3;
          break;
        }
        case IMAGE: {
          putImage(c, canvas, under, onLayer, memory, words[i], words[i + 1], words[i + 2], words[i + 3], words[i + 4] === 1, numbers[j], numbers[j + 1]);
          i += 5;
          j += 2;
          break;
        }
        default: throw new Error(`unknown canvas command ${words[i - 1]} at word ${i - 1}`);
      }
    }
    if (under) settleLayer(under, onLayer);
  }

  /**
   * The pixels a chart shows (ImageData): its canvas composited over the layer under it, if it
   * has one (drawImage, source-over: what the page's compositor shows), else the canvas alone.
   */
  function pixels(canvas) {
    const under = layerUnder(canvas);
    if (!under) return canvas.getContext("2d").getImageData(0, 0, canvas.width, canvas.height);
    const out = document.createElement("canvas");
    out.width = canvas.width;
    out.height = canvas.height;
    const c = out.getContext("2d");
    if (under.width === canvas.width && under.height === canvas.height) c.drawImage(under, 0, 0);
    c.drawImage(canvas, 0, 0);
    return c.getImageData(0, 0, out.width, out.height);
  }

  return { replay, pixels };
})();
