"""Reading GPX: schema, versions, speed elements, segments, times, sorting, gzip, sources.

Every document here is written inline (invented positions off an invented beach); each
test reads it through the automatic path and, where it matters, checks that the fast
byte-scan path and the careful tree path give identical tracks.
"""

from __future__ import annotations

import gzip
import io
import warnings

import numpy as np
import pandas as pd
import pytest

from sessions.errors import DataQualityWarning, NotXMLError, TrackReadError
from sessions.gpx import read_gpx
from sessions.gpx_write import write_gpx
from sessions.track import COLUMNS

GPX11 = 'xmlns="http://www.topografix.com/GPX/1/1"'
GPX10 = 'xmlns="http://www.topografix.com/GPX/1/0"'


def doc(body: str, *, version: str = "1.1", ns: str = GPX11, extra: str = "", decl: bool = True) -> bytes:
    head = '<?xml version="1.0" encoding="UTF-8"?>\n' if decl else ""
    return (f'{head}<gpx version="{version}" creator="test rig" {ns} {extra}>\n{body}\n</gpx>\n').encode()


def pts(*rows: str) -> str:
    return "<trk><trkseg>\n" + "\n".join(rows) + "\n</trkseg></trk>"


def pt(lat, lon, time=None, inner: str = "") -> str:
    t = f"<time>{time}</time>" if time is not None else ""
    return f'<trkpt lat="{lat}" lon="{lon}">{inner.split("|")[0] if "|" in inner else ""}{t}{inner.split("|")[-1]}</trkpt>'


def both_paths(data: bytes, **kw):
    """Read with the automatic path and the careful path; assert identical results."""
    a = read_gpx(data, **kw)
    b = read_gpx(data, _path="careful", **kw)
    pd.testing.assert_frame_equal(a.points, b.points)
    assert a.meta == b.meta
    return a


def test_schema_dtypes_and_order():
    data = doc(pts(pt(-38.1, 145.2, "2026-03-14T06:30:01Z", "<ele>0</ele>|"), pt(-38.2, 145.3, "2026-03-14T06:30:02Z")))
    track = both_paths(data)
    p = track.points
    assert tuple(p.columns) == COLUMNS
    assert str(p["time"].dtype) == "datetime64[ns, UTC]"
    for col in ("lat", "lon", "ele_m", "speed_mps"):
        assert p[col].dtype == np.float64
    assert p["segment"].dtype == np.int32
    # elevation 0 is data, a missing elevation is NaN
    assert p["ele_m"].iloc[0] == 0.0
    assert np.isnan(p["ele_m"].iloc[1])
    assert p["speed_mps"].isna().all()
    assert track.meta.gpx_version == "1.1"
    assert track.meta.creator == "test rig"
    assert track.meta.source == "<bytes>"
    assert len(track.meta.sha256) == 64


def test_fast_path_is_taken_for_common_files():
    data = doc(pts(pt(1.0, 2.0, "2026-01-01T00:00:00Z"), pt(1.0, 2.1, "2026-01-01T00:00:01Z")))
    read_gpx(data, _path="fast")  # raises ValueError if the screens send it to the tree


@pytest.mark.parametrize(
    "speed_markup, ns_extra",
    [
        ("<extensions><gpxtpx:TrackPointExtension><gpxtpx:speed>{v}</gpxtpx:speed>"
         "</gpxtpx:TrackPointExtension></extensions>",
         'xmlns:gpxtpx="http://example.invalid/tpx/v2"'),
        ("<extensions><fl:speed>{v}</fl:speed></extensions>", 'xmlns:fl="https://floatlift.invalid/xmlns/track/1"'),
        ("<extensions><speed>{v}</speed></extensions>", ""),
        ("<extensions><abc:speed>{v}</abc:speed></extensions>", 'xmlns:abc="urn:x-test:abc"'),
    ],
)
def test_reported_speed_in_extensions(speed_markup, ns_extra):
    rows = [pt(1.0, 2.0 + i / 1e4, f"2026-01-01T00:00:0{i}Z", "|" + speed_markup.format(v=1.5 + i)) for i in range(3)]
    track = both_paths(doc(pts(*rows), extra=ns_extra))
    assert track.points["speed_mps"].tolist() == [1.5, 2.5, 3.5]


def test_gpx10_speed_element_and_version():
    rows = [pt(1.0, 2.0, "2026-01-01T00:00:00Z", "|<speed>2.25</speed>"), pt(1.0, 2.0, "2026-01-01T00:00:01Z", "|<speed>0</speed>")]
    track = both_paths(doc(pts(*rows), version="1.0", ns=GPX10))
    assert track.meta.gpx_version == "1.0"
    assert track.points["speed_mps"].tolist() == [2.25, 0.0]


def test_version_from_namespace_and_none_without():
    body = pts(pt(1, 2, "2026-01-01T00:00:00Z"), pt(1, 2, "2026-01-01T00:00:01Z"))
    no_version = f'<gpx {GPX10}>{body}</gpx>'.encode()
    assert both_paths(no_version).meta.gpx_version == "1.0"
    bare = f"<gpx>{body}</gpx>".encode()
    assert both_paths(bare).meta.gpx_version is None


def test_many_tracks_and_segments_numbered_over_the_file():
    seg = lambda t0: "<trkseg>" + pt(1, 2, f"2026-01-01T00:00:{t0:02d}Z") + pt(1, 2, f"2026-01-01T00:00:{t0 + 1:02d}Z") + "</trkseg>"  # noqa: E731
    body = f"<trk><name>first</name>{seg(0)}<trkseg></trkseg>{seg(10)}</trk><trk>{seg(20)}</trk>"
    track = both_paths(doc(body))
    # every <trkseg> of every <trk> counts, the empty one too (number 1)
    assert track.points["segment"].tolist() == [0, 0, 2, 2, 3, 3]


@pytest.mark.parametrize(
    "text, expected",
    [
        ("2026-03-14T06:30:00Z", "2026-03-14T06:30:00"),
        ("2026-03-14T06:30:00.5Z", "2026-03-14T06:30:00.5"),
        ("2026-03-14T06:30:00.123456Z", "2026-03-14T06:30:00.123456"),
        ("2026-03-14T06:30:00.123456789Z", "2026-03-14T06:30:00.123456789"),
        ("2026-03-14T08:30:00+02:00", "2026-03-14T06:30:00"),
        ("2026-03-14T01:00:00.25-05:30", "2026-03-14T06:30:00.25"),
        ("2026-03-14T06:30:00", "2026-03-14T06:30:00"),  # no offset: UTC, as GPX specifies
        ("2026-03-14T07:30:00+0100", "2026-03-14T06:30:00"),  # basic-format offset (tree path)
        ("  2026-03-14T06:30:00Z\n", "2026-03-14T06:30:00"),
    ],
)
def test_time_forms(text, expected):
    rows = [pt(1, 2, text), pt(1, 2, "2026-03-14T07:00:00Z")]
    track = both_paths(doc(pts(*rows)))
    assert track.points["time"].iloc[0] == pd.Timestamp(expected, tz="UTC")


def test_mixed_offsets_sorted_in_utc():
    rows = [pt(1, 2, "2026-03-14T08:30:00+02:00"), pt(1, 3, "2026-03-14T06:29:00Z"), pt(1, 4, "2026-03-14T01:31:00-05:00")]
    track = both_paths(doc(pts(*rows)))
    assert track.points["lon"].tolist() == [3.0, 2.0, 4.0]
    assert track.meta.n_reordered == 1


def test_duplicates_merged_keeping_the_first_and_reorders_counted():
    rows = [
        pt(1.0, 2.0, "2026-01-01T00:00:00Z"),
        pt(1.0, 2.1, "2026-01-01T00:00:02Z"),
        pt(9.0, 9.0, "2026-01-01T00:00:02Z"),  # exact duplicate time: dropped
        pt(1.0, 2.2, "2026-01-01T00:00:01Z"),  # out of order
        pt(1.0, 2.3, "2026-01-01T00:00:03Z"),
    ]
    track = both_paths(doc(pts(*rows)))
    assert track.points["lon"].tolist() == [2.0, 2.2, 2.1, 2.3]
    assert track.meta.n_duplicates_merged == 1
    assert track.meta.n_reordered == 1
    assert track.meta.n_points_raw == 5
    assert track.points["time"].is_monotonic_increasing and track.points["time"].is_unique


def test_untimed_points_dropped_and_counted():
    rows = [pt(1, 2, "2026-01-01T00:00:00Z"), pt(1, 3), pt(1, 4, "2026-01-01T00:00:01Z"), pt(1, 5, " ")]
    track = both_paths(doc(pts(*rows)))
    assert track.n_points == 2
    assert track.meta.n_untimed_dropped == 2
    assert track.meta.n_points_raw == 2


def test_gaps_recorded_over_threshold():
    times = ["00:00:00", "00:00:01", "00:02:01", "00:02:02", "00:02:33"]
    track = both_paths(doc(pts(*[pt(1, 2, f"2026-01-01T{t}Z") for t in times])))
    assert len(track.meta.gaps) == 1
    assert track.meta.gaps[0].duration_s == 120.0
    assert track.meta.gaps[0].start == pd.Timestamp("2026-01-01T00:00:01Z")
    track = read_gpx(doc(pts(*[pt(1, 2, f"2026-01-01T{t}Z") for t in times])), gap_s=30)
    assert [g.duration_s for g in track.meta.gaps] == [120.0, 31.0]
    assert track.meta.gap_threshold_s == 30


def test_bom_and_no_declaration():
    body = pts(pt(1, 2, "2026-01-01T00:00:00Z"), pt(1, 2, "2026-01-01T00:00:01Z"))
    assert both_paths(b"\xef\xbb\xbf" + doc(body)).n_points == 2
    assert both_paths(doc(body, decl=False)).n_points == 2


@pytest.mark.parametrize("codec", ["utf-16", "utf-16-le", "utf-16-be"])
def test_utf16_documents(codec):
    text = doc(pts(pt(1, 2, "2026-01-01T00:00:00Z"), pt(1, 2, "2026-01-01T00:00:01Z"))).decode()
    text = text.replace('encoding="UTF-8"', f'encoding="{codec.upper()}"')
    assert both_paths(text.encode(codec)).n_points == 2


def test_declared_latin1_document():
    text = doc(pts(pt(1, 2, "2026-01-01T00:00:00Z"), pt(1, 2, "2026-01-01T00:00:01Z")), extra="").decode()
    text = text.replace('encoding="UTF-8"', 'encoding="ISO-8859-1"').replace("test rig", "Mar\u00e9e")
    track = both_paths(text.encode("latin-1"))
    assert track.meta.creator == "Mar\u00e9e"


def test_unknown_encoding_refused():
    data = doc(pts(pt(1, 2, "2026-01-01T00:00:00Z"))).replace(b"UTF-8", b"X-NO-SUCH-CODEC")
    with pytest.raises(NotXMLError, match="unknown text encoding"):
        read_gpx(data)


def test_odd_markup_takes_the_careful_path_with_the_same_result():
    plain = doc(pts(pt(1.5, 2.5, "2026-01-01T00:00:00Z", "<ele>3</ele>|"), pt(1.6, 2.6, "2026-01-01T00:00:01Z")))
    variants = [
        plain.replace(b'<trkpt lat="1.5" lon="2.5">', b"<trkpt lon='2.5' lat='1.5'>"),
        plain.replace(b"<ele>3</ele>", b"<ele><!-- metres -->3</ele>"),
        plain.replace(b"<ele>3</ele>", b"<ele><![CDATA[3]]></ele>"),
        plain.replace(b"<ele>3</ele>", b"<ele>&#51;</ele>"),
        plain.replace(b"<trk>", b'<trk><extensions><x:a xmlns:x="urn:x-a">1</x:a></extensions>'),
        plain.replace(GPX11.encode(), b'xmlns:g="http://www.topografix.com/GPX/1/1"').replace(b"<", b"<g:").replace(
            b"<g:/", b"</g:").replace(b"<g:?xml", b"<?xml"),
    ]
    ref = read_gpx(plain, _path="careful").points
    for data in variants:
        for path in ("auto", "careful"):
            got = read_gpx(data, _path=path).points
            pd.testing.assert_frame_equal(got, ref)


def test_elements_outside_tracks_are_ignored():
    body = (
        '<metadata><time>2020-01-01T00:00:00Z</time></metadata>'
        '<wpt lat="5" lon="6"><ele>1</ele><time>2020-01-01T00:00:00Z</time></wpt>'
        '<rte><rtept lat="7" lon="8"><time>2020-01-01T00:00:00Z</time></rtept></rte>'
        + pts(pt(1, 2, "2026-01-01T00:00:00Z"), pt(1, 2, "2026-01-01T00:00:01Z"))
    )
    track = both_paths(doc(body))
    assert track.points["lat"].tolist() == [1.0, 1.0]
    assert track.points["ele_m"].isna().all()


def test_elements_in_foreign_namespaces_are_not_track_values():
    inner = '<extensions><x:time xmlns:x="urn:x">1999-01-01T00:00:00Z</x:time><x:ele xmlns:x="urn:x">5</x:ele></extensions>'
    rows = [pt(1, 2, "2026-01-01T00:00:00Z", "|" + inner), pt(1, 2, "2026-01-01T00:00:01Z")]
    track = both_paths(doc(pts(*rows)))
    assert track.points["ele_m"].isna().all()
    assert track.start == pd.Timestamp("2026-01-01T00:00:00Z")


def test_bad_elevation_and_negative_speed_become_missing_with_a_warning():
    rows = [
        pt(1, 2, "2026-01-01T00:00:00Z", "<ele>high</ele>|<extensions><speed>-1</speed></extensions>"),
        pt(1, 2, "2026-01-01T00:00:01Z", "<ele>4</ele>|<extensions><speed>2</speed></extensions>"),
    ]
    with pytest.warns(DataQualityWarning) as record:
        track = read_gpx(doc(pts(*rows)))
    assert any("elevation" in str(w.message) for w in record)
    assert any("reported speed" in str(w.message) for w in record)
    assert np.isnan(track.points["ele_m"].iloc[0]) and track.points["ele_m"].iloc[1] == 4.0
    assert np.isnan(track.points["speed_mps"].iloc[0]) and track.points["speed_mps"].iloc[1] == 2.0


def test_clock_before_gps_time_warns():
    rows = [pt(1, 2, "1901-12-13T20:45:52Z"), pt(1, 2, "1901-12-13T20:45:53Z")]
    with pytest.warns(DataQualityWarning, match="before GPS time"):
        read_gpx(doc(pts(*rows)))


def _sample_points(n: int = 50) -> pd.DataFrame:
    rng = np.random.default_rng(3)
    return pd.DataFrame(
        {
            "time": pd.Timestamp("2026-03-14T06:30:00Z") + pd.to_timedelta(np.arange(n) * 0.2, unit="s"),
            "lat": -38.4 + np.cumsum(rng.normal(0, 1e-5, n)),
            "lon": 145.0 + np.cumsum(rng.normal(0, 1e-5, n)),
            "ele_m": rng.normal(0, 1, n),
            "speed_mps": np.abs(rng.normal(2, 1, n)),
            "segment": np.repeat([0, 1], n // 2).astype(np.int32),
        }
    )


def test_all_source_kinds_and_gzip(tmp_path):
    data = write_gpx(_sample_points())
    plain = tmp_path / "session.gpx"
    plain.write_bytes(data)
    packed = tmp_path / "session.gpx.gz"
    packed.write_bytes(gzip.compress(data))
    disguised = tmp_path / "session.gpx"  # gzip recognised by its bytes, not the name
    ref = read_gpx(data).points
    results = [
        read_gpx(str(plain)),
        read_gpx(plain),
        read_gpx(io.BytesIO(data)),
        read_gpx(packed),
        read_gpx(gzip.compress(data)),
        read_gpx(io.BytesIO(gzip.compress(data))),
        read_gpx(gzip.compress(data[:1000]) + gzip.compress(data[1000:])),  # two gzip members
    ]
    disguised.write_bytes(gzip.compress(data))
    results.append(read_gpx(disguised))
    for track in results:
        pd.testing.assert_frame_equal(track.points, ref)
    with open(plain, "rb") as fh:
        track = read_gpx(fh)
    assert track.meta.source == "session.gpx"
    assert read_gpx(packed).meta.source == "session.gpx.gz"
    import hashlib

    assert read_gpx(packed).meta.sha256 == hashlib.sha256(packed.read_bytes()).hexdigest()


def test_writer_round_trip_values():
    points = _sample_points()
    track = both_paths(write_gpx(points, decimals=9))
    np.testing.assert_allclose(track.points["lat"], points["lat"], atol=1e-9, rtol=0)
    np.testing.assert_allclose(track.points["ele_m"], points["ele_m"].round(3), atol=1e-12, rtol=0)
    np.testing.assert_allclose(track.points["speed_mps"], points["speed_mps"].round(3), atol=1e-12, rtol=0)
    assert (track.points["time"] == points["time"]).all()
    assert track.points["segment"].tolist() == points["segment"].tolist()


def test_missing_file_and_folder_are_read_errors(tmp_path):
    with pytest.raises(TrackReadError, match="no such file"):
        read_gpx(tmp_path / "absent.gpx")
    with pytest.raises(TrackReadError, match="not a regular file|folder"):
        read_gpx(tmp_path)


def test_bad_arguments_are_programming_errors():
    data = doc(pts(pt(1, 2, "2026-01-01T00:00:00Z"), pt(1, 2, "2026-01-01T00:00:01Z")))
    with pytest.raises(ValueError):
        read_gpx(data, gap_s=0)
    with pytest.raises(ValueError):
        read_gpx(data, max_bytes=0)
    with pytest.raises(TypeError):
        read_gpx(12345)
    with pytest.raises(TypeError):
        read_gpx(io.StringIO(data.decode()))


def test_no_warnings_for_a_clean_file():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        read_gpx(write_gpx(_sample_points()))
