"""The figures' PNG files hold the pixels matplotlib draws: our writer (RGB where every
pixel is opaque, RGBA otherwise, zlib level 3) is checked against matplotlib's own PNG
writer (``savefig(format="png")``, always RGBA), both decoded by Pillow; the chunks are
read as the PNG specification (W3C PNG, 2nd ed., 11.2.2 IHDR, 11.3.4.3 tEXt, 11.3.5.3
pHYs) lays them out."""

from __future__ import annotations

import io
import struct
import zlib

import matplotlib as mpl
import numpy as np
from outputs_support import run
from PIL import Image

from stackopt.outputs.plots import STYLE, figure_bytes, new_figure
from stackopt.outputs.plots_stackup import plot_costs


def _chunks(data: bytes) -> dict[bytes, bytes]:
    """Chunk type -> data of a PNG file, each chunk's CRC-32 checked (zlib.crc32)."""
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    out, pos = {}, 8
    while pos < len(data):
        (n,) = struct.unpack(">I", data[pos:pos + 4])
        kind, body = data[pos + 4:pos + 8], data[pos + 8:pos + 8 + n]
        (crc,) = struct.unpack(">I", data[pos + 8 + n:pos + 12 + n])
        assert crc == zlib.crc32(kind + body), kind
        out.setdefault(kind, body)
        pos += 12 + n
    return out


def _matplotlib_png(fig) -> np.ndarray:
    buf = io.BytesIO()
    with mpl.rc_context(STYLE):
        fig.savefig(buf, format="png")
    return np.asarray(Image.open(buf).convert("RGBA"))


def test_opaque_figure_is_rgb_with_matplotlibs_pixels():
    fig = plot_costs(run())
    data = figure_bytes(fig, "png")
    ch = _chunks(data)
    width, height, depth, colour = struct.unpack(">IIBB", ch[b"IHDR"][:10])
    assert (depth, colour) == (8, 2)  # 8-bit truecolour, no alpha
    assert ch[b"tEXt"] == b"Software\x00stackopt"
    ppm_x, ppm_y, unit = struct.unpack(">IIB", ch[b"pHYs"])
    assert unit == 1 and ppm_x == ppm_y == round(STYLE["savefig.dpi"] / 0.0254)
    ours = np.asarray(Image.open(io.BytesIO(data)).convert("RGBA"))
    assert ours.shape == (height, width, 4)
    np.testing.assert_array_equal(ours, _matplotlib_png(fig))


def test_transparent_pixels_keep_their_alpha():
    fig = new_figure(3.0, 2.0, facecolor="none")
    ax = fig.add_subplot()
    ax.plot([0, 1], [0, 1])
    ax.patch.set_alpha(0.0)
    data = figure_bytes(fig, "png")
    _, _, depth, colour = struct.unpack(">IIBB", _chunks(data)[b"IHDR"][:10])
    assert (depth, colour) == (8, 6)  # 8-bit truecolour with alpha
    ours = np.asarray(Image.open(io.BytesIO(data)))
    assert ours[..., 3].min() == 0
    np.testing.assert_array_equal(ours, _matplotlib_png(fig))
