// replay.js: draws a chart's display list on its canvases (the page's second
// module, after web/util.js; web/core.js hands it to the core with
// `setCanvasReplay`). The core records what a chart draws and encodes it as a
// command buffer (crates/web/src/commands.rs: opcodes and counts in a
// Uint32Array, coordinates in a Float64Array, both views of WebAssembly
// memory, plus the strings this table does not hold yet); this loop makes the
// canvas calls, in the order and with the arguments the core encoded. One
// call from the core per chart instead of one per canvas call: the calls
// through wasm-bindgen cost more than the drawing (docs/page.md "Draw fast").
//
// A view is three stacked canvases of one size (web/index.html, style.css
// `.layered`): `ID-under`, the chart canvas `ID`, `ID-over`. The core splits
// the list into parts (crates/web/src/layers.rs: the back on the layer under,
// the middle on the chart canvas, the front on the layer over) and after an
// edit sends only the parts it changed, usually the middle alone; the `plan`
// says per part its canvas, whether that is cleared first and where the part
// ends. The image the core marks (a map's cells opening the middle, checked
// opaque: crates/web/src/layers.rs `Plan::put`) goes on the layer under with
// one putImageData; any other image is put on a scratch canvas and drawn with
// drawImage. Without its two layers (or with `layered` false: the chi-square
// map, the `oneCanvas` test hook) every part is drawn on the chart canvas, in
// order, without clearing (every chart paints its own background).
// `Replay.pixels(canvas)` returns the composited pixels of a view (tests,
// pictures).

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
  // Per canvas: a canvas never shown, for images drawn onto another canvas.
  const scratch = new WeakMap();

  // Per chart canvas: its layers as last looked up (`layersOf`).
  const layersFound = new WeakMap();
  // Per canvas: its 2d context (getContext returns the same object every time; asked once).
  const contexts = new WeakMap();

  function context(canvas) {
    let c = contexts.get(canvas);
    if (!c) {
      c = canvas.getContext("2d");
      contexts.set(canvas, c);
    }
    return c;
  }

  // The layers under and over a chart canvas (`ID-under`, `ID-over`), or null without both.
  // Looked up in the document once per canvas, and again only when a layer found left the
  // document or the canvas's id changed (or none were found: they may be added later).
  function layersOf(canvas) {
    const known = layersFound.get(canvas);
    if (known && known.id === canvas.id && known.under.isConnected && known.over.isConnected) return known;
    const under = document.getElementById(canvas.id + "-under");
    const over = document.getElementById(canvas.id + "-over");
    if (!(under instanceof HTMLCanvasElement && over instanceof HTMLCanvasElement)) return null;
    const found = { id: canvas.id, under, over };
    layersFound.set(canvas, found);
    return found;
  }

  // Puts an image: with putImageData when it is marked opaque and `put` (the layer under a
  // chart: an opaque image drawn there replaces the pixels, as putImageData does), else on
  // a scratch canvas drawn onto `c` with drawImage.
  function putImage(c, target, put, memory, ptr, len, w, h, opaque, x, y) {
    const pixels = new ImageData(new Uint8ClampedArray(memory.buffer, ptr, len), w, h);
    if (put && opaque) {
      c.putImageData(pixels, x, y);
      return;
    }
    let s = scratch.get(target);
    if (!s) { s = document.createElement("canvas"); scratch.set(target, s); }
    if (s.width !== w || s.height !== h) { s.width = w; s.height = h; }
    context(s).putImageData(pixels, 0, 0);
    c.drawImage(s, x, y);
  }

  /**
   * Draws one encoded display list (called by the core, crates/web/src/canvas.rs `send`).
   * `reset`: empty the string table first; `lengths`/`text`: the new strings (UTF-16 lengths,
   * concatenated; `text` is undefined when there are none), whose first id is `first`;
   * `memory`: the core's WebAssembly memory (images are read from it at the addresses in
   * `words`); `plan`: per part of the list, its canvas
   * (0 the layer under, 1 the chart canvas, 2 the layer over), whether it is cleared first
   * (1) and where the part ends in `words`. Returns whether the parts went on the view's
   * layers (false: all on `canvas`).
   */
  function replay(canvas, layered, words, numbers, lengths, text, first, reset, memory, plan) {
    if (reset) strings.length = 0;
    if (strings.length !== first) throw new Error(`the canvas string table is out of step (${strings.length} strings, the core expects ${first})`);
    for (let k = 0, at = 0; k < lengths.length; k++) {
      strings.push(text.slice(at, at + lengths[k]));
      at += lengths[k];
    }
    const layers = layersOf(canvas);
    if (!layered || !layers) {
      // One canvas: layers it has would show stale parts over or under it.
      if (layers) {
        for (const l of [layers.under, layers.over]) context(l).clearRect(0, 0, l.width, l.height);
      }
      draw(context(canvas), canvas, false, words, numbers, 0, words.length, 0, memory);
      return false;
    }
    let i = 0;
    let j = 0;
    for (let k = 0; k < plan.length; k += 3) {
      const where = plan[k];
      const target = where === 0 ? layers.under : where === 2 ? layers.over : canvas;
      if (target.width !== canvas.width || target.height !== canvas.height) {
        target.width = canvas.width;
        target.height = canvas.height;
      }
      const c = context(target);
      if (plan[k + 1] === 1) c.clearRect(0, 0, target.width, target.height);
      j = draw(c, target, where === 0, words, numbers, i, plan[k + 2], j, memory);
      i = plan[k + 2];
    }
    return true;
  }

  // Makes the canvas calls of words[i..end] (numbers from j) on `c`, the context of `target`;
  // `put`: opaque images are put with putImageData. Returns where the numbers read end.
  function draw(c, target, put, words, numbers, i, n, j, memory) {
    // Whether a rotated text's transform is still set (TEXT_ROTATED).
    let turned = false;
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
            if (i >= n || words[i] !== TEXT_ROTATED) {
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
          putImage(c, target, put, memory, words[i], words[i + 1], words[i + 2], words[i + 3], words[i + 4] === 1, numbers[j], numbers[j + 1]);
          i += 5;
          j += 2;
          break;
        }
        default: throw new Error(`unknown canvas command ${words[i - 1]} at word ${i - 1}`);
      }
    }
    if (turned) c.setTransform(1, 0, 0, 1, 0, 0);
    return j;
  }

  /**
   * The pixels a view shows (ImageData): its chart canvas composited between the layers under
   * and over it, when it has them (drawImage, source-over: what the page's compositor shows),
   * else the canvas alone.
   */
  function pixels(canvas) {
    const layers = layersOf(canvas);
    if (!layers) return canvas.getContext("2d").getImageData(0, 0, canvas.width, canvas.height);
    const out = document.createElement("canvas");
    out.width = canvas.width;
    out.height = canvas.height;
    const c = out.getContext("2d");
    for (const l of [layers.under, canvas, layers.over]) {
      if (l.width === canvas.width && l.height === canvas.height) c.drawImage(l, 0, 0);
    }
    return c.getImageData(0, 0, out.width, out.height);
  }

  return { replay, pixels };
})();
