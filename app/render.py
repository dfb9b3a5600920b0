"""Static chart images (PNG, SVG, a JPEG print copy) drawn by plotly.js in one local Chrome/Chromium page.

One headless browser is started per batch (``choreographer`` speaks the browser's DevTools protocol over a
pipe: no network port is opened), one page loads the plotly.js shipped with the plotly package from the
local disk, and every figure of the batch is drawn there with ``Plotly.toImage``.  The source line of a
bundle is written along the bottom of each PNG in the same page (a canvas), and the print copy for the
PDF is encoded there too, so the Python side only decodes bytes.  Drawing every image in one page, instead
of a fresh page per image, is what keeps a bundle's fourteen charts within a few seconds.

When no browser is found or it fails, :func:`render_images` returns no images and a sentence saying why
(:data:`NO_BROWSER_HINT` plus the cause); it never raises.
"""

from __future__ import annotations

import asyncio
import base64
import json
import queue
import re
import tempfile
import threading
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable

import plotly
import plotly.graph_objects as go
import plotly.utils

from valuesift.app.browser import find_browser

__all__ = ["NO_BROWSER_HINT", "RenderOutcome", "FigureFeed", "render_images", "plotly_js_path", "stable_svg", "RENDER_TIMEOUT_S"]

NO_BROWSER_HINT = (
    "The chart images could not be rendered because no Chrome or Chromium browser was found. "
    "To enable them, install Chromium (on Debian: apt-get install chromium) or set the environment "
    "variable BROWSER_PATH to a Chrome or Chromium executable, then build the bundle again. "
    "The interactive charts (charts/*.html) and every table are included regardless."
)

#: Longest wait for the browser to start, for plotly.js to load, or for one image.
RENDER_TIMEOUT_S = 120.0

#: Scale of the JPEG print copy: 1280 x 720 layout pixels at 1.25 give 1600 x 900, about 150 dots per inch
#: across a chart printed 27 cm wide on an A4 landscape page.
PRINT_SCALE = 1.25

_RENDER_LOCK = threading.Lock()      # one browser at a time on a small machine


@dataclass(frozen=True)
class RenderOutcome:
    """PNG and SVG bytes per chart key (empty when nothing could be rendered) and a note saying why."""

    png: dict[str, bytes]
    svg: dict[str, bytes]
    note: str | None
    jpeg: dict[str, bytes] = field(default_factory=dict)   # print copies for report.pdf (unstamped, PRINT_SCALE)


def plotly_js_path() -> Path:
    """The plotly.min.js shipped inside the installed plotly package (used offline)."""
    return Path(plotly.__file__).parent / "package_data" / "plotly.min.js"


def stable_svg(svg: bytes) -> bytes:
    """Replace plotly's random per-plot id (used in clip-path ids) by a fixed one, so the SVG is reproducible."""
    m = re.search(rb'clip([0-9a-f]{6})', svg)
    if not m:
        return svg
    return svg.replace(m.group(1), b"vsplot")


# The page's one function: draw a figure, stamp the line, encode the print copy.  The stamp scales the
# chart down by the height of one strip of text (keeping its proportions) and writes the line in that strip.
_DRAW_JS = r"""
window.vsRaster = function (svgText, W, H, scale, kind, quality) {
  return new Promise(function (resolve, reject) {
    const img = new Image();
    img.onload = function () {
      const c = document.createElement('canvas'); c.width = Math.round(W * scale); c.height = Math.round(H * scale);
      const g = c.getContext('2d');
      if (kind === 'image/jpeg') { g.fillStyle = 'white'; g.fillRect(0, 0, c.width, c.height); }
      g.drawImage(img, 0, 0, c.width, c.height);
      resolve(c.toDataURL(kind, quality));
    };
    img.onerror = function () { reject(new Error('the chart image could not be drawn')); };
    img.src = 'data:image/svg+xml;charset=utf-8,' + encodeURIComponent(svgText);
  });
};
window.vsDraw = async function (fig, o) {
  const W = o.width, H = o.height;
  const url = await Plotly.toImage(fig, {width: W, height: H, format: 'svg', scale: 1});
  const svg = decodeURIComponent(url.slice(url.indexOf(',') + 1));
  const out = {};
  if (o.svg) { out.svg = svg; }
  if (o.jpeg) { out.jpeg = await window.vsRaster(svg, W, H, o.print_scale, 'image/jpeg', 0.92); }
  let body = svg;
  if (o.stamp !== null && o.stamp !== undefined) {
    // The chart scaled down by one strip of text (proportions kept, centred), the line in the strip.
    const strip = Math.max(12, Math.floor(H * 0.034));
    const k = (H - strip) / H, dx = (W - W * k) / 2, size = Math.max(5, Math.floor(strip * 0.5));
    const inner = svg.replace(/^<\?xml[^>]*>/, '');
    const esc = String(o.stamp).replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
    body = '<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink" width="' + W +
      '" height="' + H + '" viewBox="0 0 ' + W + ' ' + H + '"><rect width="100%" height="100%" fill="white"/>' +
      '<g transform="translate(' + dx + ',0) scale(' + k + ')">' + inner + '</g>' +
      '<text x="' + Math.floor(W * 0.015) + '" y="' + (H - strip + Math.floor(strip * 0.2) + size) +
      '" font-family="DejaVu Sans, Verdana, sans-serif" font-size="' + size + '" fill="rgb(111,119,130)">' +
      esc + '</text></svg>';
  }
  out.png = await window.vsRaster(body, W, H, o.scale, 'image/png');
  return out;
};
"""


def _bytes(data_url: str) -> bytes:
    head, _, body = data_url.partition(",")
    if head.endswith(";base64"):
        return base64.b64decode(body)
    from urllib.parse import unquote   # plotly returns SVG percent-encoded
    return unquote(body).encode("utf-8")


async def _evaluate(tab: Any, expression: str) -> Any:
    reply = await asyncio.wait_for(tab.send_command("Runtime.evaluate", params={
        "expression": expression, "awaitPromise": True, "returnByValue": True}), RENDER_TIMEOUT_S)
    result = reply.get("result", {}) if isinstance(reply, dict) else {}
    if "exceptionDetails" in result:
        detail = result["exceptionDetails"]
        raise RuntimeError(str(detail.get("exception", {}).get("description") or detail.get("text"))[:300])
    return result.get("result", {}).get("value")


class FigureFeed:
    """Figures handed to a running :func:`render_images` one by one (the browser starts before the first
    figure is drawn): :meth:`put` each, then :meth:`close`."""

    def __init__(self, total: int) -> None:
        self.total = int(total)
        self._queue: queue.Queue[tuple[str, go.Figure] | None] = queue.Queue()

    def put(self, key: str, fig: go.Figure) -> None:
        self._queue.put((key, fig))

    def close(self) -> None:
        self._queue.put(None)

    def get(self) -> tuple[str, go.Figure] | None:
        return self._queue.get()


def render_images(figs: dict[str, go.Figure] | FigureFeed, *, width: int, height: int, scale: float = 1.0,
                  svg: bool = True, jpeg: bool = False, stamp: str | None = None,
                  progress: Callable[[str, float], None] | None = None) -> RenderOutcome:
    """Draw every figure at ``width`` x ``height`` layout pixels (PNG at ``scale``; SVG; a JPEG print copy at
    ``min(scale, PRINT_SCALE)``).

    ``figs`` is a dict, or a :class:`FigureFeed` filled while the browser starts.  With ``stamp`` the PNGs
    carry that line along their bottom edge (the SVG and the JPEG stay as drawn).  Returns empty dicts and
    a note (never raises) when no browser is found or the browser fails.
    """
    if isinstance(figs, dict):
        feed = FigureFeed(len(figs))
        for k, f in figs.items():
            feed.put(k, f)
        feed.close()
    else:
        feed = figs
    if feed.total == 0:
        return RenderOutcome({}, {}, None)
    browser = find_browser()
    if browser is None:
        return RenderOutcome({}, {}, NO_BROWSER_HINT)
    try:
        import choreographer
    except ImportError:  # pragma: no cover - a dependency
        return RenderOutcome({}, {}, "The chart images could not be rendered: the choreographer package is not "
                                     "installed (pip install choreographer). " + NO_BROWSER_HINT)
    png: dict[str, bytes] = {}
    svgs: dict[str, bytes] = {}
    jpegs: dict[str, bytes] = {}
    opts = {"width": int(width), "height": int(height), "scale": float(scale), "svg": bool(svg),
            "jpeg": bool(jpeg), "stamp": stamp, "print_scale": min(float(scale), PRINT_SCALE)}

    async def run(page: Path) -> None:
        async with choreographer.Browser(path=browser, headless=True) as b:
            tab = b.get_tab()
            await asyncio.wait_for(tab.send_command("Page.navigate", params={"url": page.as_uri()}), RENDER_TIMEOUT_S)
            loop = asyncio.get_running_loop()
            start = loop.time()
            while not await _evaluate(tab, "typeof window.vsDraw === 'function' && typeof Plotly !== 'undefined'"):
                if loop.time() - start > RENDER_TIMEOUT_S:
                    raise TimeoutError("plotly.js did not load in the browser page")
                await asyncio.sleep(0.02)
            n = max(feed.total, 1)
            i = 0
            while True:
                item = await asyncio.to_thread(feed.get)
                if item is None:
                    break
                key, fig = item
                if progress is not None:
                    progress(f"rendering chart {i + 1} of {n}", i / n)
                i += 1
                # to_plotly_json keeps the fixed trace ids (to_json drops them): the same figure, the same SVG
                spec = json.dumps(fig.to_plotly_json(), cls=plotly.utils.PlotlyJSONEncoder)
                out = await _evaluate(tab, f"window.vsDraw({spec}, {json.dumps(opts)})")
                png[key] = _bytes(out["png"])
                if svg:
                    svgs[key] = stable_svg(str(out["svg"]).encode("utf-8"))
                if jpeg:
                    jpegs[key] = _bytes(out["jpeg"])
            if progress is not None:
                progress(f"rendered {i} charts", 1.0)

    with _RENDER_LOCK, tempfile.TemporaryDirectory(prefix="valuesift-render-") as tmp:
        page = Path(tmp) / "render.html"
        page.write_text('<!doctype html><html><head><meta charset="utf-8">'
                        f'<script src="{plotly_js_path().as_uri()}"></script>'
                        f"<script>{_DRAW_JS}</script></head><body></body></html>", encoding="utf-8")
        try:
            asyncio.run(run(page))      # this thread's own event loop, whatever loop the caller runs
        except BaseException as err:  # noqa: BLE001 - reported as a note, never a crash
            if isinstance(err, (KeyboardInterrupt, SystemExit)):
                raise
            cause = f"{type(err).__name__}: {str(err)[:300]}"
            return RenderOutcome({}, {}, NO_BROWSER_HINT + f" (The browser at {browser} failed: {cause})")
    return RenderOutcome(png, svgs, None, jpegs)
