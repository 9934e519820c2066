"""Colour scales and PNG encoding for the pre-coloured steepness map (numpy and zlib only).

The map is sent to the browser as one PNG drawn by a bqplot ``Image`` mark: the stock
``HeatMap`` mark redraws a 256² grid in about 260 ms, one image in a few milliseconds. Colours are
computed here, so the colour bar and the map cannot disagree.
"""

from __future__ import annotations

import struct
import zlib
from typing import Final

import numpy as np
from numpy.typing import ArrayLike, NDArray

#: The viridis colour map (perceptually uniform, readable with the common colour-vision
#: deficiencies and in greyscale), sampled at 17 evenly spaced points and interpolated linearly
#: in between (within 6/255 of the full 256-entry table; checked against matplotlib in tests).
VIRIDIS_ANCHORS: Final[NDArray[np.float64]] = np.array(
    [
        (0.2670, 0.0049, 0.3294),
        (0.2823, 0.0950, 0.4173),
        (0.2788, 0.1755, 0.4834),
        (0.2590, 0.2515, 0.5247),
        (0.2297, 0.3224, 0.5457),
        (0.1994, 0.3876, 0.5546),
        (0.1727, 0.4488, 0.5579),
        (0.1490, 0.5081, 0.5573),
        (0.1276, 0.5669, 0.5506),
        (0.1206, 0.6258, 0.5335),
        (0.1579, 0.6838, 0.5017),
        (0.2461, 0.7389, 0.4520),
        (0.3692, 0.7889, 0.3829),
        (0.5160, 0.8312, 0.2943),
        (0.6785, 0.8637, 0.1895),
        (0.8456, 0.8873, 0.0997),
        (0.9932, 0.9062, 0.1439),
    ]
)

#: Cells where the measure is undefined: a neutral light grey, which viridis never produces.
UNDEFINED_RGB: Final[tuple[int, int, int]] = (214, 214, 214)

#: Okabe–Ito palette (distinguishable with the common colour-vision deficiencies), for lines.
OKABE_ITO: Final[tuple[str, ...]] = (
    "#0072B2",  # blue
    "#D55E00",  # vermillion
    "#009E73",  # bluish green
    "#CC79A7",  # reddish purple
    "#E69F00",  # orange
    "#56B4E9",  # sky blue
    "#F0E442",  # yellow
    "#000000",  # black
)


def viridis(t: ArrayLike) -> NDArray[np.float32]:
    """Map values in [0, 1] to viridis RGB (float32, shape ``t.shape + (3,)``, in [0, 1]).

    Values outside [0, 1] are clipped; NaN must be handled by the caller (it has no colour).
    """
    t = np.clip(np.asarray(t, dtype=np.float32), 0.0, 1.0)
    position = t * np.float32(len(VIRIDIS_ANCHORS) - 1)
    lower = np.minimum(position.astype(np.int64), len(VIRIDIS_ANCHORS) - 2)
    frac = (position - lower)[..., None]
    anchors = VIRIDIS_ANCHORS.astype(np.float32)
    return np.asarray(anchors[lower] * (1.0 - frac) + anchors[lower + 1] * frac, dtype=np.float32)


def _palette() -> NDArray[np.uint8]:
    """RGBA lookup table: 256 viridis steps, then undefined grey, white and black."""
    rgb = np.rint(viridis(np.linspace(0.0, 1.0, 256)) * 255.0)
    extra = np.array([UNDEFINED_RGB, (255, 255, 255), (0, 0, 0)], dtype=float)
    table = np.empty((256 + len(extra), 4), dtype=np.uint8)
    table[:, :3] = np.vstack([rgb, extra]).astype(np.uint8)
    table[:, 3] = 255
    return table


#: Colour lookup table (RGBA, uint8): indices 0–255 viridis, then the special colours below.
PALETTE: Final[NDArray[np.uint8]] = _palette()
UNDEFINED_INDEX: Final[int] = 256
WHITE_INDEX: Final[int] = 257
BLACK_INDEX: Final[int] = 258


def relative_luminance(rgb: ArrayLike) -> NDArray[np.float32]:
    """Approximate luminance of RGB colours in [0, 1] (Rec. 709 weights on the encoded values)."""
    rgb = np.asarray(rgb, dtype=np.float32)
    weights = np.array([0.2126, 0.7152, 0.0722], dtype=np.float32)
    return np.asarray(rgb @ weights, dtype=np.float32)


def encode_png(rgba: ArrayLike) -> bytes:
    """Encode an 8-bit RGBA image, shape (height, width, 4), as PNG bytes.

    Row 0 is the top of the picture. Uses filter type 0 on every row and zlib level 1: a map
    is redrawn often, and level 6 takes twice as long for a few per cent fewer bytes.
    """
    image = np.ascontiguousarray(rgba, dtype=np.uint8)
    if image.ndim != 3 or image.shape[2] != 4 or image.shape[0] < 1 or image.shape[1] < 1:
        msg = f"`rgba` must have shape (height, width, 4); got {image.shape}"
        raise ValueError(msg)
    height, width = image.shape[:2]
    raw = np.zeros((height, 1 + 4 * width), dtype=np.uint8)
    raw[:, 1:] = image.reshape(height, 4 * width)

    def chunk(kind: bytes, data: bytes) -> bytes:
        body = kind + data
        return (
            struct.pack(">I", len(data)) + body + struct.pack(">I", zlib.crc32(body) & 0xFFFFFFFF)
        )

    header = struct.pack(">IIBBBBB", width, height, 8, 6, 0, 0, 0)
    return b"".join(
        (
            b"\x89PNG\r\n\x1a\n",
            chunk(b"IHDR", header),
            chunk(b"IDAT", zlib.compress(raw.tobytes(), 1)),
            chunk(b"IEND", b""),
        )
    )


def transparent_png() -> bytes:
    """A 1×1 fully transparent PNG (placeholder before the first map is drawn)."""
    return encode_png(np.zeros((1, 1, 4), dtype=np.uint8))


def colour_bar_png(height: int = 256) -> bytes:
    """A vertical viridis gradient, low values at the bottom, as PNG (width 1, pixelated)."""
    t = np.linspace(1.0, 0.0, height, dtype=np.float32)[:, None]
    rgb = viridis(t)
    rgba = np.empty((height, 1, 4), dtype=np.uint8)
    rgba[..., :3] = np.rint(rgb * 255.0).astype(np.uint8)
    rgba[..., 3] = 255
    return encode_png(rgba)
