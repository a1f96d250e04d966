"""The PNG writer against an independent reader (Pillow) and the PNG specification's layout.

Source: PNG specification, ISO/IEC 15948:2004 (W3C Recommendation "Portable Network
Graphics (PNG) Specification, Second Edition"), sections 5 (datastream: signature, chunk
layout with CRC-32 over type and data), 11.2.2 (IHDR) and 9 (filter type 0, None).
"""

from __future__ import annotations

import io
import struct
import zlib

import numpy as np
import pytest
from PIL import Image

from ridesim.errors import InputError
from ridesim.render.png import encode_png


@pytest.mark.parametrize("shape", [(1, 1, 3), (7, 13, 3), (120, 97, 4), (601, 1600, 4)])
def test_pillow_reads_the_exact_pixels(shape):
    rng = np.random.default_rng(sum(shape))
    a = rng.integers(0, 256, size=shape, dtype=np.uint8)
    data = encode_png(a)
    im = Image.open(io.BytesIO(data))
    im.verify()  # chunk CRCs and structure
    im = Image.open(io.BytesIO(data))
    assert im.mode == "RGB" and im.size == (shape[1], shape[0])
    assert np.array_equal(np.asarray(im), a[:, :, :3])


def test_layout_follows_the_specification():
    a = np.zeros((2, 3, 4), np.uint8)
    a[1, 2] = (10, 20, 30, 0)  # alpha is dropped, colour kept
    data = encode_png(a, level=9)
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    chunks, pos = [], 8
    while pos < len(data):
        (n,) = struct.unpack(">I", data[pos:pos + 4])
        tag, body = data[pos + 4:pos + 8], data[pos + 8:pos + 8 + n]
        (crc,) = struct.unpack(">I", data[pos + 8 + n:pos + 12 + n])
        assert crc == zlib.crc32(tag + body)
        chunks.append((tag, body))
        pos += 12 + n
    assert [t for t, _ in chunks] == [b"IHDR", b"IDAT", b"IEND"]
    assert struct.unpack(">IIBBBBB", chunks[0][1]) == (3, 2, 8, 2, 0, 0, 0)
    raw = zlib.decompress(chunks[1][1])
    rows = np.frombuffer(raw, np.uint8).reshape(2, 1 + 9)
    assert list(rows[:, 0]) == [0, 0]  # filter type None
    assert list(rows[1, 7:]) == [10, 20, 30]


@pytest.mark.parametrize("bad", [np.zeros((2, 2), np.uint8), np.zeros((2, 2, 2), np.uint8),
                                 np.zeros((2, 2, 3), np.float64), np.zeros((0, 2, 3), np.uint8)])
def test_bad_images_are_refused(bad):
    with pytest.raises(InputError, match="image must be"):
        encode_png(bad)
