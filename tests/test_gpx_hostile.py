"""Hostile and broken input: each is refused with its own error class, quickly, and nothing
from outside the file (local files named by entities) ever appears in a message."""

from __future__ import annotations

import gzip
import io
import os
import time
import tracemalloc
import zlib

import numpy as np
import pytest

import sessions.gpx as gpx_module
from sessions.cli import main
from sessions.errors import (
    CoordinateRangeError,
    FileTooLargeError,
    ForbiddenXMLError,
    NotGPXError,
    NotXMLError,
    NoTimestampsError,
    NoTrackPointsError,
    TooFewPointsError,
    TrackReadError,
    TruncatedXMLError,
)
from sessions.gpx import read_gpx

HEAD = '<?xml version="1.0" encoding="UTF-8"?>\n<gpx version="1.1" creator="t" xmlns="http://www.topografix.com/GPX/1/1">'


def gpx(*points: str) -> bytes:
    return (HEAD + "<trk><trkseg>" + "".join(points) + "</trkseg></trk></gpx>\n").encode()


def pt(lat="1.0", lon="2.0", time="2026-01-01T00:00:00Z") -> str:
    return f'<trkpt lat="{lat}" lon="{lon}"><time>{time}</time></trkpt>'


GOOD = gpx(pt(time="2026-01-01T00:00:00Z"), pt(time="2026-01-01T00:00:01Z"))

BILLION_LAUGHS = b"""<?xml version="1.0"?>
<!DOCTYPE lolz [
 <!ENTITY lol "lol">
 <!ENTITY lol2 "&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;">
 <!ENTITY lol3 "&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;">
 <!ENTITY lol4 "&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;">
 <!ENTITY lol5 "&lol4;&lol4;&lol4;&lol4;&lol4;&lol4;&lol4;&lol4;&lol4;&lol4;">
 <!ENTITY lol6 "&lol5;&lol5;&lol5;&lol5;&lol5;&lol5;&lol5;&lol5;&lol5;&lol5;">
 <!ENTITY lol7 "&lol6;&lol6;&lol6;&lol6;&lol6;&lol6;&lol6;&lol6;&lol6;&lol6;">
 <!ENTITY lol8 "&lol7;&lol7;&lol7;&lol7;&lol7;&lol7;&lol7;&lol7;&lol7;&lol7;">
 <!ENTITY lol9 "&lol8;&lol8;&lol8;&lol8;&lol8;&lol8;&lol8;&lol8;&lol8;&lol8;">
]>
<gpx version="1.1" creator="&lol9;"><trk><trkseg>
<trkpt lat="1" lon="2"><time>2026-01-01T00:00:00Z</time><name>&lol9;</name></trkpt>
<trkpt lat="1" lon="2"><time>2026-01-01T00:00:01Z</time></trkpt>
</trkseg></trk></gpx>
"""


def test_billion_laughs_refused_before_any_parser(monkeypatch):
    def no_parser(*args, **kwargs):  # the guard must act first
        raise AssertionError("a parser saw a document with a DTD")

    monkeypatch.setattr(gpx_module, "_parse", no_parser)
    t0 = time.perf_counter()
    with pytest.raises(ForbiddenXMLError, match="DOCTYPE"):
        read_gpx(BILLION_LAUGHS)
    assert time.perf_counter() - t0 < 1.0


def test_external_entity_never_read(tmp_path, capsys):
    secret = tmp_path / "private.txt"
    token = "sapphire-kelp-7731-do-not-leak"
    secret.write_text(token)
    doc = f"""<?xml version="1.0"?>
<!DOCTYPE gpx [ <!ENTITY xxe SYSTEM "file://{secret.as_posix()}"> ]>
<gpx version="1.1" creator="&xxe;"><trk><name>&xxe;</name><trkseg>
<trkpt lat="1" lon="2"><time>2026-01-01T00:00:00Z</time><desc>&xxe;</desc></trkpt>
<trkpt lat="1" lon="2"><time>2026-01-01T00:00:01Z</time></trkpt>
</trkseg></trk></gpx>
""".encode()
    with pytest.raises(ForbiddenXMLError) as info:
        read_gpx(doc)
    assert token not in str(info.value)
    path = tmp_path / "xxe.gpx"
    path.write_bytes(doc)
    assert main(["inspect", str(path)]) == 2
    assert main(["inspect", "--json", str(path)]) == 2
    out, err = capsys.readouterr()
    assert token not in out and token not in err
    assert err.count("\n") == 2  # one line per run


def test_entity_declaration_hidden_in_utf16_is_found():
    doc = BILLION_LAUGHS.decode().replace('<?xml version="1.0"?>', '<?xml version="1.0" encoding="UTF-16"?>')
    with pytest.raises(ForbiddenXMLError):
        read_gpx(doc.encode("utf-16"))


def test_zero_byte_file(tmp_path):
    empty = tmp_path / "empty.gpx"
    empty.write_bytes(b"")
    with pytest.raises(NotXMLError, match="empty.gpx: empty file"):
        read_gpx(empty)
    with pytest.raises(NotXMLError):
        read_gpx(b"  \n\t ")


def test_random_bytes():
    rng = np.random.default_rng(11)
    for size in (1, 7, 100, 10_000):
        blob = rng.integers(0, 256, size, dtype=np.uint8).tobytes()
        with pytest.raises(NotXMLError):
            read_gpx(blob)


def test_text_that_is_not_xml():
    with pytest.raises(NotXMLError, match="does not begin with '<'"):
        read_gpx(b"lat,lon,time\n1,2,2026-01-01T00:00:00Z\n")


def test_well_formed_but_not_gpx():
    with pytest.raises(NotGPXError, match="<kml>"):
        read_gpx(b'<?xml version="1.0"?><kml xmlns="http://www.opengis.net/kml/2.2"><Document/></kml>')


@pytest.mark.parametrize("cut", [0.3, 0.6, 0.95])
def test_truncated_gpx(cut):
    data = gpx(*[pt(time=f"2026-01-01T00:00:{i:02d}Z") for i in range(20)])
    with pytest.raises(TruncatedXMLError, match="truncated"):
        read_gpx(data[: int(len(data) * cut)])


def test_truncated_gzip():
    packed = gzip.compress(GOOD)
    with pytest.raises(TruncatedXMLError, match="gzip"):
        read_gpx(packed[: len(packed) // 2])


def test_broken_in_the_middle_is_not_xml():
    data = GOOD.replace(b"</time></trkpt>", b"</tim></trkpt>", 1)
    with pytest.raises(NotXMLError, match="not well-formed"):
        read_gpx(data)


def test_sparse_300_mb_file_refused_fast_without_reading(tmp_path):
    big = tmp_path / "huge.gpx"
    with open(big, "wb") as fh:
        fh.truncate(300 * 1024 * 1024)  # sparse: no data blocks written
    tracemalloc.start()
    t0 = time.perf_counter()
    try:
        with pytest.raises(FileTooLargeError, match="huge.gpx: .*over the .* limit"):
            read_gpx(big)
        with open(big, "rb") as fh, pytest.raises(FileTooLargeError):
            read_gpx(fh)
        elapsed = time.perf_counter() - t0
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert elapsed < 1.0
    assert peak < 5 * 1024 * 1024


class _EndlessStream(io.RawIOBase):
    """A non-seekable stream that never ends (like a pipe fed by a runaway program)."""

    def __init__(self):
        self.served = 0

    def readable(self):
        return True

    def readinto(self, buf):
        n = len(buf)
        buf[:n] = b" " * n
        self.served += n
        return n


def test_endless_stream_stops_at_the_limit():
    stream = _EndlessStream()
    with pytest.raises(FileTooLargeError):
        read_gpx(stream, max_bytes=2_000_000)
    assert stream.served <= 2_000_000 + 1 + (1 << 20)


def test_gzip_bomb_refused_fast_with_little_memory():
    # 400 MB of spaces inside a GPX shell, compressed to about 0.4 MB
    comp = zlib.compressobj(9, zlib.DEFLATED, 16 + zlib.MAX_WBITS)
    parts = [comp.compress(HEAD.encode())]
    block = b" " * (1 << 20)
    for _ in range(400):
        parts.append(comp.compress(block))
    parts.append(comp.compress(b"</gpx>"))
    parts.append(comp.flush())
    bomb = b"".join(parts)
    assert len(bomb) < 2_000_000
    tracemalloc.start()
    t0 = time.perf_counter()
    try:
        with pytest.raises(FileTooLargeError, match="decompressed"):
            read_gpx(bomb)
        elapsed = time.perf_counter() - t0
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert elapsed < 15.0  # generous: a safety bound, not a speed target
    assert peak < 8 * 1024 * 1024  # the bomb itself plus one chunk, never the output


def test_deeply_nested_xml():
    deep = HEAD + "<extensions>" + "<a>" * 5000 + "</a>" * 5000 + "</extensions>" + "<trk><trkseg>" + pt() + pt(
        time="2026-01-01T00:00:01Z") + "</trkseg></trk></gpx>"
    with pytest.raises(NotXMLError, match="safety limits|depth"):
        read_gpx(deep.encode())


def test_huge_attribute_value():
    huge = GOOD.replace(b'creator="t"', b'creator="' + b"x" * 12_000_000 + b'"')
    t0 = time.perf_counter()
    with pytest.raises(NotXMLError):
        read_gpx(huge)
    assert time.perf_counter() - t0 < 15.0  # generous: a safety bound, not a speed target
    # a long but acceptable attribute is kept
    long = GOOD.replace(b'creator="t"', b'creator="' + b"y" * 100_000 + b'"')
    assert len(read_gpx(long).meta.creator) == 100_000


def test_non_utf8_bytes():
    data = GOOD.replace(b"<trk>", b"<trk><name>Mar\xe9e \xff</name>")
    with pytest.raises(NotXMLError, match="not valid UTF-8"):
        read_gpx(data)


@pytest.mark.parametrize(
    "lat, lon",
    [("nan", "2"), ("1", "inf"), ("-inf", "2"), ("90.0001", "2"), ("1", "-180.5"), ("north", "2"), ("", "2"), ("1e400", "2")],
)
def test_bad_coordinates(lat, lon):
    data = gpx(pt(), pt(lat=lat, lon=lon, time="2026-01-01T00:00:01Z"))
    with pytest.raises(CoordinateRangeError, match="track point 2 \\(line \\d+\\)"):
        read_gpx(data)


def test_missing_latitude_attribute():
    data = gpx(pt(), '<trkpt lon="2"><time>2026-01-01T00:00:01Z</time></trkpt>')
    with pytest.raises(CoordinateRangeError, match="latitude is missing"):
        read_gpx(data)


def test_extreme_but_valid_coordinates_read():
    track = read_gpx(gpx(pt(lat="90", lon="180"), pt(lat="-90", lon="-180", time="2026-01-01T00:00:01Z")))
    assert track.points["lat"].tolist() == [90.0, -90.0]


@pytest.mark.parametrize(
    "text, match",
    [
        ("0001-01-01T00:00:00Z", "outside the supported years"),
        ("9999-12-31T23:59:59Z", "outside the supported years"),
        ("1500-06-01T12:00:00Z", "outside the supported years"),
        ("yesterday", "not an ISO 8601"),
        ("today", "not an ISO 8601"),
        ("NaT", "not an ISO 8601"),
        ("2026-13-01T00:00:00Z", "not an ISO 8601"),
        ("2026-01-01T25:00:00Z", "not an ISO 8601"),
    ],
)
def test_bad_or_far_times(text, match):
    with pytest.raises(CoordinateRangeError, match=match):
        read_gpx(gpx(pt(), pt(time=text)))


def test_far_future_time_within_range_reads_with_warning():
    from sessions.errors import DataQualityWarning

    with pytest.warns(DataQualityWarning, match="future"):
        track = read_gpx(gpx(pt(time="2250-01-01T00:00:00Z"), pt(time="2250-01-01T00:00:01Z")))
    assert track.n_points == 2


def test_routes_and_waypoints_only():
    data = (HEAD + '<wpt lat="1" lon="2"/><rte><rtept lat="1" lon="2"/><rtept lat="1" lon="3"/></rte></gpx>').encode()
    with pytest.raises(NoTrackPointsError, match="2 route points and 1 waypoint"):
        read_gpx(data)


def test_no_times_and_too_few():
    with pytest.raises(NoTimestampsError):
        read_gpx(gpx('<trkpt lat="1" lon="2"/>', '<trkpt lat="1" lon="3"></trkpt>'))
    with pytest.raises(TooFewPointsError, match="only 1 timed track point"):
        read_gpx(gpx(pt(), pt(time="2026-01-01T00:00:00Z")))  # a duplicate leaves one


def test_every_refusal_is_a_value_error_and_names_the_file(tmp_path):
    path = tmp_path / "broken-name.gpx"
    for data in (b"", BILLION_LAUGHS, b"\x00\x01", GOOD[:50], gpx(pt())):
        path.write_bytes(data)
        with pytest.raises(TrackReadError) as info:
            read_gpx(path)
        assert isinstance(info.value, ValueError)
        assert str(info.value).startswith("broken-name.gpx: ")
        assert "\n" not in str(info.value)


def test_permission_denied(tmp_path):
    if os.geteuid() == 0:
        pytest.skip("root reads every file")
    path = tmp_path / "locked.gpx"
    path.write_bytes(GOOD)
    path.chmod(0)
    with pytest.raises(TrackReadError, match="permission"):
        read_gpx(path)
