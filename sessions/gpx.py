"""Reading GPX 1.0 / 1.1 tracks into a :class:`sessions.track.Track`.

:func:`read_gpx` accepts a path, bytes or a binary file object (plain or gzip-compressed
GPX), refuses hostile or broken input with a specific :class:`sessions.errors.TrackReadError`
subclass, and returns the timed track points in the column schema of
:mod:`sessions.track`.

Pipeline
--------
1. **Load** the bytes under a size limit (checked from the file size before reading; for
   gzip, on the decompressed size, stopping as soon as the limit is passed).
2. **Normalise** the text encoding to UTF-8 (BOM, UTF-16/32, declared 8-bit encodings).
3. **Guard**: any ``<!DOCTYPE`` or ``<!ENTITY`` is refused before a parser sees the bytes,
   so entity bombs and external entities are never expanded.
4. **Check** with lxml (no DTD, no network, no entity resolution, default size and depth
   limits) without building a tree: the document is well-formed, else a specific error.
   The root element alone is then read for the creator, version and namespace.
5. **Extract** the raw text of each track point. The *fast path* works on the positions of
   all ``<`` and ``>`` in the bytes (numpy): tag names, element depth and the text of
   childless elements follow by vectorised arithmetic, and values are assigned to points
   by position (``searchsorted``). It runs only when screens prove the scan sees exactly
   what the XML tree holds (no comments, CDATA, entities, prefixed GPX namespace, nested
   markup in values, track elements out of place); otherwise the *careful path* builds
   the lxml tree and walks ``gpx/trk/trkseg/trkpt``. Both give the same raw strings,
   which :func:`_assemble` turns into the table.
6. **Assemble**: numbers and ISO 8601 times converted in bulk, range checks, untimed points
   dropped, stable sort by time, exact duplicate times merged (first fix kept), gaps listed.
"""

from __future__ import annotations

import codecs
import hashlib
import io
import logging
import os
import re
import warnings
import zlib
from dataclasses import dataclass
from pathlib import Path
from typing import BinaryIO

import numpy as np
import pandas as pd

from sessions.errors import (
    CoordinateRangeError,
    DataQualityWarning,
    FileTooLargeError,
    ForbiddenXMLError,
    NoTimestampsError,
    NoTrackPointsError,
    NotGPXError,
    NotXMLError,
    TooFewPointsError,
    TrackReadError,
    TruncatedXMLError,
)
from sessions.track import (
    COL_ELE,
    COL_LAT,
    COL_LON,
    COL_SEGMENT,
    COL_SPEED,
    COL_TIME,
    COLUMNS,
    DEFAULT_GAP_S,
    Gap,
    Track,
    TrackMeta,
)

log = logging.getLogger(__name__)

__all__ = ["read_gpx", "track_summary", "DEFAULT_MAX_BYTES", "GPX10_NS", "GPX11_NS"]

#: Default size limit of a GPX document (decompressed) [bytes].
DEFAULT_MAX_BYTES = 200 * 1024 * 1024
GPX10_NS = "http://www.topografix.com/GPX/1/0"
GPX11_NS = "http://www.topografix.com/GPX/1/1"
_GZIP_MAGIC = b"\x1f\x8b"
_CHUNK = 1 << 20
#: Start of GPS time (1980-01-06 UTC); earlier fix times mean an unset device clock.
_GPS_EPOCH = pd.Timestamp("1980-01-06T00:00:00Z")


# ======================================================================================
# Public entry point
# ======================================================================================
def read_gpx(
    source: str | os.PathLike | bytes | bytearray | memoryview | BinaryIO,
    *,
    max_bytes: int = DEFAULT_MAX_BYTES,
    gap_s: float = DEFAULT_GAP_S,
    _path: str = "auto",
) -> Track:
    """Read a GPX 1.0 / 1.1 file (plain or gzip) into a :class:`~sessions.track.Track`.

    Parameters
    ----------
    source : path, bytes or binary file object
        The GPX document. gzip compression is recognised by its magic bytes, not the name.
    max_bytes : int
        Largest accepted document size [bytes]; for gzip input, of the decompressed text.
    gap_s : float
        A pause between consecutive fixes longer than this is listed in ``meta.gaps`` [s].
    _path : {"auto", "fast", "careful"}
        For tests and benchmarks: force an extraction path ("fast" raises ``ValueError``
        when its screens send the document to the careful path).

    Returns
    -------
    Track
        Timed points sorted by time with unique times (schema in :mod:`sessions.track`).

    Raises
    ------
    FileTooLargeError, NotXMLError, TruncatedXMLError, ForbiddenXMLError, NotGPXError,
    NoTrackPointsError, NoTimestampsError, TooFewPointsError, CoordinateRangeError
        Each with a one-line message naming the file. Unreadable files (missing, a folder,
        no permission) raise :class:`~sessions.errors.TrackReadError`.

    Notes
    -----
    Times without a UTC offset are taken as UTC (GPX 1.0 and 1.1 both specify UTC).
    Reported speed is read from a GPX 1.0 ``<speed>`` child or from any element named
    ``speed`` (any namespace prefix) inside the point's ``<extensions>``; it is assumed to
    be in m/s, as GPX 1.0 and the common extension schemas define it.
    """
    if not (isinstance(max_bytes, (int, np.integer)) and max_bytes > 0):
        raise ValueError(f"max_bytes must be a positive integer, got {max_bytes!r}")
    if not (np.isfinite(gap_s) and gap_s > 0):
        raise ValueError(f"gap_s must be a positive number of seconds, got {gap_s!r}")
    if _path not in ("auto", "fast", "careful"):
        raise ValueError(f"_path must be 'auto', 'fast' or 'careful', got {_path!r}")

    name, raw = _load(source, max_bytes)
    sha256 = hashlib.sha256(raw).hexdigest()
    data = _gunzip(raw, name, max_bytes) if raw[:2] == _GZIP_MAGIC else raw
    del raw
    data = _to_utf8(data, name)
    _guard(data, name)
    _parse(data, name, tree=False)  # well-formed, within the parser's limits
    info = _root_info(_root_element(data), name)

    raw_pts = None
    tree = []
    if _path in ("auto", "fast"):
        raw_pts = _extract_fast(data, info)
        if raw_pts is None and _path == "fast":
            raise ValueError("the fast path does not apply to this document")
    if raw_pts is None:
        tree.append(_parse(data, name))
        raw_pts = _extract_careful(tree[0], info)

    def locate(i: int) -> str:
        if not tree:
            tree.append(_parse(data, name))
        return _point_ref(tree[0], info, i)

    return _assemble(raw_pts, info, name=name, sha256=sha256, gap_s=float(gap_s), locate=locate)


# ======================================================================================
# Step 1: loading under a size limit
# ======================================================================================
def _mb(n: int) -> str:
    return f"{n / 1e6:.1f} MB"


def _too_large(name: str, size: int | None, max_bytes: int, what: str = "file") -> FileTooLargeError:
    size_txt = f"is {_mb(size)}" if size is not None else f"is larger than {_mb(max_bytes)}"
    return FileTooLargeError(f"{name}: {what} {size_txt}, over the {_mb(max_bytes)} limit (max_bytes={max_bytes})")


def _load(source, max_bytes: int) -> tuple[str, bytes]:
    """Return (display name, raw bytes), refusing anything over ``max_bytes`` early."""
    if isinstance(source, (bytes, bytearray, memoryview)):
        raw = bytes(source)
        if len(raw) > max_bytes:
            raise _too_large("<bytes>", len(raw), max_bytes)
        return "<bytes>", raw
    if isinstance(source, (str, os.PathLike)):
        path = Path(source)
        name = path.name or str(path)
        try:
            st = path.stat()
            if not path.is_file():
                raise TrackReadError(f"{name}: not a regular file")
            if st.st_size > max_bytes:
                raise _too_large(name, st.st_size, max_bytes)
            with open(path, "rb") as fh:
                raw = fh.read(min(st.st_size, max_bytes) + 1)
        except FileNotFoundError as exc:
            raise TrackReadError(f"{name}: no such file") from exc
        except PermissionError as exc:
            raise TrackReadError(f"{name}: permission denied") from exc
        except IsADirectoryError as exc:
            raise TrackReadError(f"{name}: is a folder, not a file") from exc
        except OSError as exc:
            raise TrackReadError(f"{name}: cannot be read ({exc.strerror or exc})") from exc
        if len(raw) > max_bytes:  # grew while reading, or a special file
            raise _too_large(name, None, max_bytes)
        return name, raw
    if hasattr(source, "read"):
        fname = getattr(source, "name", None)
        name = os.path.basename(fname) if isinstance(fname, str) and fname else "<stream>"
        remaining = _remaining_size(source)
        if remaining is not None and remaining > max_bytes:
            raise _too_large(name, remaining, max_bytes)
        parts: list[bytes] = []
        total = 0
        while True:
            chunk = source.read(min(_CHUNK, max_bytes + 1 - total))
            if chunk is None:  # non-blocking stream with nothing ready
                raise TrackReadError(f"{name}: the stream returned no data (non-blocking?)")
            if isinstance(chunk, str):
                raise TypeError("read_gpx needs a binary file object (open the file with 'rb')")
            if not chunk:
                break
            parts.append(bytes(chunk))
            total += len(chunk)
            if total > max_bytes:
                raise _too_large(name, None, max_bytes)
        return name, b"".join(parts)
    raise TypeError(f"read_gpx needs a path, bytes or a binary file object, got {type(source).__name__}")


def _remaining_size(fh) -> int | None:
    """Bytes left in a file object, when knowable without reading it."""
    try:
        if hasattr(fh, "fileno"):
            st = os.fstat(fh.fileno())
            if st.st_size > 0 and fh.seekable():
                return st.st_size - fh.tell()
    except (OSError, ValueError, io.UnsupportedOperation, AttributeError):
        pass
    try:
        if fh.seekable():
            here = fh.tell()
            end = fh.seek(0, io.SEEK_END)
            fh.seek(here)
            return end - here
    except (OSError, ValueError, io.UnsupportedOperation, AttributeError):
        pass
    return None


def _gunzip(raw: bytes, name: str, max_bytes: int) -> bytes:
    """Decompress gzip data (one or more members), refusing output over ``max_bytes``.

    A first pass only counts the decompressed bytes (memory stays at one chunk), so a
    gzip bomb is refused without holding its output; the second pass keeps the text.
    """
    for keep in (False, True):
        out: list[bytes] = []
        total = 0
        buf = raw
        while True:
            d = zlib.decompressobj(16 + zlib.MAX_WBITS)
            try:
                while True:
                    chunk = d.decompress(buf, _CHUNK)
                    total += len(chunk)
                    if total > max_bytes:
                        raise _too_large(name, None, max_bytes, what="decompressed gzip content")
                    if keep:
                        out.append(chunk)
                    buf = d.unconsumed_tail
                    if d.eof:
                        break
                    if not chunk and not buf:
                        raise TruncatedXMLError(f"{name}: the gzip data ends early (truncated file?)")
            except zlib.error as exc:
                raise NotXMLError(f"{name}: damaged gzip data ({exc})") from exc
            rest = d.unused_data
            if rest[:2] == _GZIP_MAGIC:  # another gzip member follows
                buf = rest
                continue
            if rest.strip(b"\0"):
                raise NotXMLError(f"{name}: unexpected bytes after the gzip data")
            break
        if keep:
            return b"".join(out)
    raise AssertionError("unreachable")  # pragma: no cover


# ======================================================================================
# Steps 2-4: encoding, guard, parse
# ======================================================================================
_DECL_RE = re.compile(rb"^<\?xml[^>]*?\?>")
_ENC_RE = re.compile(rb"""encoding\s*=\s*["']([A-Za-z][A-Za-z0-9._-]*)["']""")
_UTF8_NAMES = {"utf-8", "utf8", "us-ascii", "ascii"}
_LEADING_WS_RE = re.compile(rb"\s*")


def _to_utf8(data: bytes, name: str) -> bytes:
    """Return the document as UTF-8 bytes without BOM; transcode other encodings."""
    if _LEADING_WS_RE.match(data).end() == len(data):  # (data.strip() would copy the document)
        raise NotXMLError(f"{name}: empty file, not XML")
    codec = None
    if data[:3] == codecs.BOM_UTF8:
        data = data[3:]
    elif data[:4] in (codecs.BOM_UTF32_LE, codecs.BOM_UTF32_BE):
        codec = "utf-32"
    elif data[:2] in (codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE):
        codec = "utf-16"
    elif data[:4] == b"<\x00?\x00":
        codec = "utf-16-le"
    elif data[:4] == b"\x00<\x00?":
        codec = "utf-16-be"
    else:
        decl = _DECL_RE.match(data)
        if decl:
            m = _ENC_RE.search(decl.group(0))
            if m and m.group(1).decode("ascii").lower() not in _UTF8_NAMES:
                codec = m.group(1).decode("ascii")
    if codec is None:
        return data  # UTF-8: the parser checks every byte sequence (see _parse)
    try:
        text = data.decode(codec)
    except LookupError as exc:
        raise NotXMLError(f"{name}: declares an unknown text encoding {codec!r}") from exc
    except UnicodeDecodeError as exc:
        raise NotXMLError(f"{name}: not valid {codec} text (bad byte at offset {exc.start})") from exc
    text = text.lstrip("\ufeff")
    text = re.sub(r"^<\?xml[^>]*?\?>", '<?xml version="1.0" encoding="UTF-8"?>', text, count=1)
    return text.encode("utf-8")


_FORBIDDEN_RE = re.compile(rb"<!\s*(DOCTYPE|ENTITY)", re.IGNORECASE)


def _guard(data: bytes, name: str) -> None:
    """Refuse DTDs and entity declarations before any XML parser sees the bytes."""
    m = _FORBIDDEN_RE.search(data)
    if m:
        what = m.group(1).decode("ascii").upper()
        raise ForbiddenXMLError(
            f"{name}: contains a <!{what}> declaration; DTDs and entities are never "
            "expanded (they can hide entity bombs or read local files), so the file is refused"
        )
    head = _LEADING_WS_RE.match(data).end()  # no copy of the document (lstrip would make one)
    if data[head : head + 1] != b"<":
        raise NotXMLError(f"{name}: not XML (the text does not begin with '<')")


def _parser(**kw):
    from lxml import etree

    return etree.XMLParser(
        **kw,
        resolve_entities=False,
        no_network=True,
        load_dtd=False,
        dtd_validation=False,
        huge_tree=False,
        collect_ids=False,
    )


_ROOT_NAME_RE = re.compile(rb"<(?!\?|!)([^\s/>]+)")


class _NoTree:
    """Parser target that keeps nothing: lxml then only checks the document."""

    def close(self) -> None:
        return None


def _root_element(data: bytes):
    """The root element with its attributes only (the document is already checked)."""
    from lxml import etree

    pull = etree.XMLPullParser(
        events=("start",), resolve_entities=False, no_network=True, load_dtd=False, huge_tree=False
    )
    for i in range(0, len(data), 65536):
        pull.feed(data[i : i + 65536])
        for _event, element in pull.read_events():
            return element
    raise NotXMLError("no root element")  # pragma: no cover - excluded by the check


def _parse(data: bytes, name: str, *, tree: bool = True):
    """Parse with lxml (safe settings); ``tree=False`` only checks well-formedness."""
    from lxml import etree

    try:
        if not tree:
            return etree.fromstring(data, _parser(target=_NoTree()))
        return etree.fromstring(data, _parser())
    except etree.XMLSyntaxError as exc:
        msg = str(exc).splitlines()[0] if str(exc) else "syntax error"
        msg = re.sub(r"\s*\(<string>, line \d+\)$", "", msg)
        root = _ROOT_NAME_RE.search(data)
        closed = root is not None and data.rstrip().endswith(b"</" + root.group(1) + b">")
        if root is not None and (not closed or "Premature end" in msg):
            raise TruncatedXMLError(
                f"{name}: the XML ends before its root element <{root.group(1).decode('utf-8', 'replace')}> "
                f"is closed (truncated file?): {msg}"
            ) from exc
        if "encoding" in msg.lower() or "utf-8" in msg.lower():
            raise NotXMLError(
                f"{name}: not valid UTF-8 text ({msg}); the file is binary or in an undeclared encoding"
            ) from exc
        if "depth" in msg.lower() or "limit" in msg.lower():
            raise NotXMLError(f"{name}: XML exceeds the parser's safety limits: {msg}") from exc
        raise NotXMLError(f"{name}: not well-formed XML: {msg}") from exc
    except ValueError as exc:  # e.g. "Unicode strings with encoding declaration"
        raise NotXMLError(f"{name}: not readable XML: {exc}") from exc


# ======================================================================================
# Step 5: extraction of raw values
# ======================================================================================
@dataclass(frozen=True)
class _RootInfo:
    ns: str | None  # namespace of the root element (the GPX namespace in use)
    creator: str | None
    version: str | None
    prefixed: bool  # root element written with a prefix


@dataclass
class _RawPoints:
    """Raw text of each track point in file order ("" where absent)."""

    lat: list
    lon: list
    ele: list
    time: list
    speed: list
    segment: np.ndarray  # int, trkseg number over the file
    n_routepoints: int = 0
    n_waypoints: int = 0
    path: str = ""  # "fast" or "careful"


def _localname(tag) -> str | None:
    if not isinstance(tag, str):
        return None  # comment or processing instruction
    return tag.rsplit("}", 1)[-1]


def _root_info(root, name: str) -> _RootInfo:
    from lxml import etree

    q = etree.QName(root)
    if q.localname != "gpx":
        raise NotGPXError(f"{name}: the root element is <{q.localname}>, not <gpx>: not a GPX document")
    version = root.get("version")
    if version is None:
        version = {GPX10_NS: "1.0", GPX11_NS: "1.1"}.get(q.namespace or "")
    return _RootInfo(ns=q.namespace, creator=root.get("creator"), version=version, prefixed=root.prefix is not None)


def _tag(info: _RootInfo, local: str) -> str:
    return f"{{{info.ns}}}{local}" if info.ns else local


def _text(el) -> str:
    """Text content of an element (``string()`` in XPath terms; comments left out)."""
    if len(el) == 0:
        return el.text or ""
    return "".join(el.itertext())


def _extract_careful(root, info: _RootInfo) -> _RawPoints:
    """Walk the tree: gpx/trk/trkseg/trkpt in the root's namespace; the reference semantics."""
    trk_t, seg_t, pt_t = _tag(info, "trk"), _tag(info, "trkseg"), _tag(info, "trkpt")
    ele_t, time_t, speed_t, ext_t = (_tag(info, x) for x in ("ele", "time", "speed", "extensions"))
    lat, lon, ele, tim, spd, seg = [], [], [], [], [], []
    nseg = 0
    for trk in root.iterchildren(trk_t):
        for trkseg in trk.iterchildren(seg_t):
            for pt in trkseg.iterchildren(pt_t):
                lat.append(pt.get("lat", ""))
                lon.append(pt.get("lon", ""))
                e = t = s = s_ext = None
                for child in pt:
                    tag = child.tag
                    if tag == time_t:
                        t = _text(child) if t is None else t
                    elif tag == ele_t:
                        e = _text(child) if e is None else e
                    elif tag == speed_t:
                        s = _text(child) if s is None else s
                    elif tag == ext_t and s_ext is None:
                        for sub in child.iter():
                            if sub is not child and _localname(sub.tag) == "speed":
                                s_ext = _text(sub)
                                break
                ele.append(e or "")
                tim.append(t or "")
                spd.append(s if s is not None else (s_ext or ""))
                seg.append(nseg)
            nseg += 1
    return _RawPoints(
        lat=lat,
        lon=lon,
        ele=ele,
        time=tim,
        speed=spd,
        segment=np.asarray(seg, dtype=np.int64),
        n_routepoints=sum(1 for _ in root.iter(_tag(info, "rtept"))),
        n_waypoints=sum(1 for _ in root.iterchildren(_tag(info, "wpt"))),
        path="careful",
    )


# --- fast path ---------------------------------------------------------------------
# The byte scan works on the positions of all '<' and '>' in the document (numpy). Once
# the screens have ruled out comments, CDATA, processing instructions and any '>' outside
# a tag end, every '<' opens exactly one tag and the next '>' closes it, so tag names,
# start/end/empty kinds and the element depth of every tag follow by vectorised
# arithmetic, and the text of a childless element lies between its '>' and the next '<'.
_IS_WS = np.zeros(256, dtype=bool)
_IS_WS[[ord(c) for c in " \t\n\r"]] = True
_IS_DELIM = _IS_WS.copy()
_IS_DELIM[[ord("/"), ord(">")]] = True
_HEAD = 16  # bytes after each '<' looked at for the tag name
_GATHER_BLOCK = 8192  # ranges gathered at once (bounds the temporary position arrays)
_NAME_RE = re.compile(rb"[^\s/>]+")
_PT_RE = re.compile(rb'<trkpt\s+(?:lat="([^"&<]*)"\s+lon="([^"&<]*)"|lon="([^"&<]*)"\s+lat="([^"&<]*)")\s*>')


class _NoFastPath(Exception):
    """The screens found something the byte scan cannot see exactly; use the tree."""


def _pairs(opens: np.ndarray, closes: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Tag indices of start and end tags of one element type; checks flat nesting."""
    starts = np.flatnonzero(opens)
    ends = np.flatnonzero(closes)
    if len(starts) != len(ends) or np.any(ends < starts) or np.any(starts[1:] < ends[:-1]):
        raise _NoFastPath("elements nest, overlap or do not pair")
    return starts, ends


def _owner(pos: np.ndarray, starts: np.ndarray, ends: np.ndarray) -> np.ndarray:
    """Index of the interval holding each tag index, -1 where none does."""
    if len(starts) == 0:
        return np.full(len(pos), -1, dtype=np.int64)
    k = np.searchsorted(starts, pos, side="right") - 1
    ok = k >= 0
    ok[ok] &= pos[ok] < ends[k[ok]]
    return np.where(ok, k, -1)


def _extract_fast(data: bytes, info: _RootInfo) -> _RawPoints | None:
    try:
        return _scan(data, info)
    except _NoFastPath as why:
        log.debug("reading with the tree: %s", why)
        return None


class _Tags:
    """Positions, names and depths of all tags of a screened document.

    Memory: a view of the document (no copy), 4-byte positions and depths, and the
    16-byte name window per tag; about 2.5 times the document for a track file.
    """

    def __init__(self, data: bytes):
        arr = np.frombuffer(data, dtype=np.uint8)
        index_t = np.int32 if len(arr) < 2**31 - _HEAD else np.int64
        lt = np.flatnonzero(arr == ord("<")).astype(index_t)
        gt = np.flatnonzero(arr == ord(">")).astype(index_t)
        if len(lt) != len(gt) or len(lt) == 0 or np.any(gt < lt) or np.any(lt[1:] < gt[:-1]):
            raise _NoFastPath("'>' outside tag ends")
        self.data, self.arr, self.lt, self.gt = data, arr, lt, gt
        # the 16 bytes after each '<'; a window running past the end is padded with spaces
        last = len(arr) - _HEAD
        if last >= 0:
            self.win = np.lib.stride_tricks.sliding_window_view(arr, _HEAD)[np.minimum(lt + 1, last)]
        else:
            self.win = np.zeros((len(lt), _HEAD), dtype=np.uint8)
        for j in np.flatnonzero(lt + 1 > last):  # at most a few tags near the end
            tail = data[int(lt[j]) + 1 :]
            self.win[j] = np.frombuffer((tail + b" " * _HEAD)[:_HEAD], dtype=np.uint8)
        self.win64 = self.win.view("<u8")  # two 8-byte words per tag
        second = self.win[:, 0]
        self.closing = second == ord("/")
        self.empty = arr[gt - 1] == ord("/")
        step = np.ones(len(lt), dtype=np.int8)
        step[self.empty | (second == ord("?"))] = 0
        step[self.closing] = -1
        if step.sum(dtype=np.int64) != 0:
            raise _NoFastPath("depth count does not return to zero")
        self.depth = np.cumsum(step, dtype=np.int32) - step  # 0 for the root element, 1 for its children

    def named(self, name: bytes, *, closing: bool = False) -> np.ndarray:
        """Mask of start (or end) tags with exactly this name (up to 15 bytes)."""
        key = (b"/" if closing else b"") + name
        size = len(key)
        want = np.frombuffer(key.ljust(_HEAD, b"\0"), dtype="<u8")
        mask = np.frombuffer((b"\xff" * size).ljust(_HEAD, b"\0"), dtype="<u8")
        w = self.win64
        return ((w[:, 0] & mask[0]) == want[0]) & ((w[:, 1] & mask[1]) == want[1]) & _IS_DELIM[self.win[:, size]]

    def names(self, idx: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Names of some tags (cut at the first delimiter) and whether they are longer."""
        rows = self.win[idx].copy()
        delim = _IS_DELIM[rows]
        delim[:, 0] = False  # '/' of an end tag
        found = delim.any(axis=1)
        size = np.where(found, delim.argmax(axis=1), _HEAD)
        rows[np.arange(_HEAD)[None, :] >= size[:, None]] = 0
        return rows.view(f"S{_HEAD}").ravel(), ~found

    def gather(self, first: np.ndarray, last: np.ndarray) -> bytes:
        """The bytes of the ranges ``first[i]..last[i]`` (inclusive), concatenated.

        Done in blocks of ranges so that the byte positions never take more than a few
        megabytes, whatever the size of the document.
        """
        first = first.astype(np.int64)
        lengths = last.astype(np.int64) - first + 1
        out = []
        for a in range(0, len(lengths), _GATHER_BLOCK):
            ln, fi = lengths[a : a + _GATHER_BLOCK], first[a : a + _GATHER_BLOCK]
            offsets = np.cumsum(ln) - ln
            pos = np.arange(int(ln.sum())) - np.repeat(offsets - fi, ln)
            out.append(self.arr[pos].tobytes())
        return b"".join(out)

    def texts(self, idx: np.ndarray) -> list[bytes]:
        """Text between each tag's '>' and the next '<' (which XML text cannot contain)."""
        joined = self.gather(self.gt[idx] + 1, self.lt[idx + 1])  # "text<text<...text<"
        return joined[:-1].split(b"<")


def _scan(data: bytes, info: _RootInfo) -> _RawPoints:
    # Screens: markup a byte scan would misread goes to the careful path.
    if info.prefixed:
        raise _NoFastPath("the GPX namespace is used with a prefix")
    first_ns = data.find(b"xmlns=")
    if (first_ns >= 0) != (info.ns is not None) or (first_ns >= 0 and data.find(b"xmlns=", first_ns + 1) >= 0):
        raise _NoFastPath("a default namespace declared below the root")
    tags = _Tags(data)
    second = tags.arr[tags.lt + 1]
    if np.any(second == ord("!")) or np.count_nonzero(second == ord("?")) > (1 if data.startswith(b"<?xml") else 0):
        raise _NoFastPath("comments, CDATA or processing instructions")
    pt_s, pt_e = _pairs(tags.named(b"trkpt"), tags.named(b"trkpt", closing=True))
    n = len(pt_s)
    if n == 0:
        raise _NoFastPath("no track points")
    seg_s, seg_e = _pairs(tags.named(b"trkseg"), tags.named(b"trkseg", closing=True))
    trk_s, trk_e = _pairs(tags.named(b"trk"), tags.named(b"trk", closing=True))
    ext_s, ext_e = _pairs(tags.named(b"extensions"), tags.named(b"extensions", closing=True))
    if np.any(tags.empty[pt_s]) or np.any(tags.empty[seg_s]) or np.any(tags.empty[trk_s]) or np.any(tags.empty[ext_s]):
        raise _NoFastPath("empty-element track tags")

    # tracks at depth 1, segments at 2, points at 3, each inside the one above
    depth = tags.depth
    seg_of_pt = _owner(pt_s, seg_s, seg_e)
    if (
        np.any(depth[trk_s] != 1)
        or np.any(depth[seg_s] != 2)
        or np.any(depth[pt_s] != 3)
        or np.any(seg_of_pt < 0)
        or np.any(_owner(seg_s, trk_s, trk_e) < 0)
    ):
        raise _NoFastPath("track elements out of place")

    lat, lon = _lat_lon(tags.gather(tags.lt[pt_s], tags.gt[pt_s]), n)
    ele = _values(tags, np.flatnonzero(tags.named(b"ele") & (depth == 4)), pt_s, pt_e, n)
    tim = _values(tags, np.flatnonzero(tags.named(b"time") & (depth == 4)), pt_s, pt_e, n)
    # speed: a direct child <speed> (GPX 1.0), or any *:speed inside the point's <extensions>
    direct = np.flatnonzero(tags.named(b"speed") & (depth == 4))
    in_ext = _speeds_in_extensions(tags, ext_s, ext_e)
    spd = _values(tags, np.sort(np.concatenate([direct, in_ext])), pt_s, pt_e, n)
    return _RawPoints(lat=lat, lon=lon, ele=ele, time=tim, speed=spd, segment=seg_of_pt.astype(np.int64), path="fast")


def _speeds_in_extensions(tags: _Tags, ext_s: np.ndarray, ext_e: np.ndarray) -> np.ndarray:
    """Tag indices of the first element named ``speed`` (any prefix) in each point's extensions."""
    if len(ext_s) == 0:
        return np.zeros(0, dtype=np.int64)
    # candidate start tags inside a depth-4 <extensions> (a point's own)
    cand = np.flatnonzero(~tags.closing & (tags.depth >= 5))
    owner = _owner(cand, ext_s, ext_e)
    keep = owner >= 0
    cand, owner = cand[keep], owner[keep]
    keep = tags.depth[ext_s[owner]] == 4
    cand, owner = cand[keep], owner[keep]
    # local name is "speed": the whole name, or the part after a prefix ':'
    names, long = tags.names(cand)
    is_speed = (names == b"speed") | np.strings.endswith(names, b":speed")
    for j in np.flatnonzero(long):  # names longer than the window: look closer
        m = _NAME_RE.match(tags.data, int(tags.lt[cand[j]]) + 1)
        is_speed[j] = m is not None and m.group(0).rsplit(b":", 1)[-1] == b"speed"
    cand, owner = cand[is_speed], owner[is_speed]
    # first per extensions block
    first = np.ones(len(owner), dtype=bool)
    first[1:] = owner[1:] != owner[:-1]
    return cand[first]


def _lat_lon(joined: bytes, n: int) -> tuple[list[str], list[str]]:
    """lat and lon texts from the joined start tags of all track points."""
    parts = joined.split(b'"')
    if (
        len(parts) == 4 * n + 1
        and parts[0] == b"<trkpt lat="
        and parts[-1] == b">"
        and set(parts[2::4]) == {b" lon="}
        and set(parts[4:-1:4]) <= {b"><trkpt lat="}
        and b"&" not in joined
    ):  # the usual <trkpt lat="..." lon="...">
        return _decode(parts[1::4]), _decode(parts[3::4])
    pts = _PT_RE.findall(joined)
    if len(pts) != n:
        raise _NoFastPath("track point start tags with other attributes")
    # lat="..." lon="..." or lon="..." lat="..."
    return _decode([p[0] or p[3] for p in pts]), _decode([p[1] or p[2] for p in pts])


def _values(tags: _Tags, idx: np.ndarray, pt_s, pt_e, n: int) -> list[str]:
    """Text of one child element per point ("" where absent)."""
    out = [""] * n
    owner = _owner(idx, pt_s, pt_e)
    inside = owner >= 0
    idx, own = idx[inside], owner[inside]
    if len(own) == 0:
        return out
    if np.any(np.diff(own) == 0):
        raise _NoFastPath("a point holds the same child twice")
    full = ~tags.empty[idx]
    if np.any(full & ~tags.closing[np.minimum(idx + 1, len(tags.lt) - 1)]):
        raise _NoFastPath("a value element holds markup")
    texts = [b""] * len(idx)
    if full.all():
        texts = tags.texts(idx)
    else:
        for j, t in zip(np.flatnonzero(full).tolist(), tags.texts(idx[full])):
            texts[j] = t
    joined = b"\x00".join(texts)
    if b"&" in joined:
        raise _NoFastPath("character references in values")
    texts = joined.decode("utf-8").split("\x00")
    if len(own) == n:
        return texts
    vals = np.empty(n, dtype=object)
    vals[:] = ""
    vals[own] = texts
    return vals.tolist()


def _decode(values: list[bytes]) -> list[str]:
    """UTF-8 bytes items to str in one pass."""
    return b"\x00".join(values).decode("utf-8").split("\x00")


# ======================================================================================
# Step 6: assembling the table
# ======================================================================================
def _point_ref(root, info: _RootInfo, i: int) -> str:
    """'track point N (line L)' for messages, N 1-based in file order."""
    pt_t = _tag(info, "trkpt")
    line = None
    for j, pt in enumerate(
        p for t in root.iterchildren(_tag(info, "trk")) for s in t.iterchildren(_tag(info, "trkseg"))
        for p in s.iterchildren(pt_t)
    ):
        if j == i:
            line = pt.sourceline
            break
    return f"track point {i + 1}" + (f" (line {line})" if line else "")


def _plural(n: int, word: str) -> str:
    return f"{n} {word}" + ("" if n == 1 else "s")


def _clip(text, limit: int = 40) -> str:
    text = repr(text)
    return text if len(text) <= limit else text[: limit - 3] + "..."


def _to_float(values: list[str], *, missing_ok: bool) -> tuple[np.ndarray, np.ndarray]:
    """Convert texts to float64 (Python ``float`` syntax, surrounding spaces allowed).

    Returns (values, bad): blank texts give NaN; ``bad`` marks texts that are not numbers
    (and blank ones too unless ``missing_ok``).
    """
    n = len(values)
    obj = np.asarray(values, dtype=object)
    blank = obj == ""
    try:
        if blank.any():
            obj = obj.copy()
            obj[blank] = "nan"
        out = np.fromiter(map(float, obj), dtype=np.float64, count=n)
        bad = np.zeros(n, dtype=bool)
    except ValueError:
        out = np.full(n, np.nan)
        bad = np.zeros(n, dtype=bool)
        for i, v in enumerate(values):
            if v.strip():
                try:
                    out[i] = float(v)
                except ValueError:
                    bad[i] = True
            else:
                blank[i] = True
    if not missing_ok:
        bad |= blank
    return out, bad


def _assemble(raw: _RawPoints, info: _RootInfo, *, name: str, sha256: str, gap_s: float, locate) -> Track:
    n = len(raw.lat)
    if n == 0:
        extra = []
        if raw.n_routepoints:
            extra.append(_plural(raw.n_routepoints, "route point"))
        if raw.n_waypoints:
            extra.append(_plural(raw.n_waypoints, "waypoint"))
        held = f"it holds only {' and '.join(extra)}" if extra else "it holds no track"
        raise NoTrackPointsError(f"{name}: no track points (<trk>/<trkseg>/<trkpt>): {held}")

    # coordinates
    for label, texts, lim in (("latitude", raw.lat, 90.0), ("longitude", raw.lon, 180.0)):
        arr, bad = _to_float(texts, missing_ok=False)
        wrong = bad | ~np.isfinite(arr) | (np.abs(arr) > lim)
        if wrong.any():
            i = int(np.flatnonzero(wrong)[0])
            what = "is missing" if not texts[i].strip() else f"{_clip(texts[i])} is not a finite number within ±{lim:g}°"
            raise CoordinateRangeError(f"{name}: {locate(i)}: {label} {what}")
        if label == "latitude":
            lat = arr
        else:
            lon = arr
    raw.lat = raw.lon = []  # the texts are no longer needed: free them before the times

    # times
    tstr = np.strings.strip(np.asarray(raw.time, dtype=str))
    timed = tstr != ""
    n_timed = int(timed.sum())
    if n_timed == 0:
        raise NoTimestampsError(f"{name}: none of the {n} track points has a <time>; floatlift needs timed points")
    keep = np.flatnonzero(timed)
    t_ns = _parse_times(tstr[keep] if n_timed < n else tstr, keep, name, locate)
    del tstr
    raw.time = []

    ele, bad_ele = _to_float(raw.ele, missing_ok=True)
    spd, bad_spd = _to_float(raw.speed, missing_ok=True)
    for arr, bad, what in ((ele, bad_ele, "elevation"), (spd, bad_spd, "reported speed")):
        bad = bad | np.isinf(arr)
        if what == "reported speed":
            bad |= arr < 0
        if bad.any():
            warnings.warn(
                f"{name}: {_plural(int(bad.sum()), what + ' value')} not usable as numbers, treated as missing",
                DataQualityWarning,
                stacklevel=3,
            )
            arr[bad] = np.nan

    n_untimed = n - n_timed
    running_max = np.maximum.accumulate(t_ns)
    n_reordered = int(np.count_nonzero(t_ns[1:] < running_max[:-1]))
    order = np.argsort(t_ns, kind="stable")
    idx = keep[order]
    t_sorted = t_ns[order]
    first = np.ones(len(t_sorted), dtype=bool)
    first[1:] = t_sorted[1:] != t_sorted[:-1]
    n_dup = int(np.count_nonzero(~first))
    idx = idx[first]
    t_sorted = t_sorted[first]
    if len(t_sorted) < 2:
        raise TooFewPointsError(
            f"{name}: only {_plural(len(t_sorted), 'timed track point')} ({n} in the file); at least two are needed"
        )

    time_index = pd.DatetimeIndex(t_sorted.view("datetime64[ns]")).tz_localize("UTC")
    points = pd.DataFrame(
        {
            COL_TIME: time_index,
            COL_LAT: lat[idx],
            COL_LON: lon[idx],
            COL_ELE: ele[idx],
            COL_SPEED: spd[idx],
            COL_SEGMENT: raw.segment[idx].astype(np.int32),
        },
        columns=list(COLUMNS),
    )
    _warn_times(name, time_index)

    big = np.flatnonzero(np.diff(t_sorted) > int(round(gap_s * 1e9)))
    gaps = tuple(Gap(start=time_index[i], end=time_index[i + 1]) for i in big)
    meta = TrackMeta(
        source=name,
        sha256=sha256,
        creator=info.creator,
        gpx_version=info.version,
        n_points_raw=n_timed,
        n_duplicates_merged=n_dup,
        n_reordered=n_reordered,
        n_untimed_dropped=n_untimed,
        gaps=gaps,
        gap_threshold_s=gap_s,
    )
    return Track(points=points, meta=meta)


_MIN_YEAR, _MAX_YEAR = 1678, 2261  # whole years inside datetime64[ns]
_TIME_SHAPE_RE = re.compile(r"\d{4}-?\d\d")  # pandas alone would also take "today" and "now"


def _parse_times(arr: np.ndarray, file_index: np.ndarray, name: str, locate) -> np.ndarray:
    """ISO 8601 texts (stripped, none empty) to int64 ns since 1970-01-01 UTC.

    Common forms (``YYYY-MM-DDThh:mm:ss[.f...]`` with ``Z``, ``+hh:mm`` / ``-hh:mm`` or no
    suffix, which GPX defines as UTC) are parsed in bulk with numpy; anything else goes
    through pandas' ISO 8601 parser, which also names the first bad text.
    """
    try:
        return _parse_times_numpy(arr)
    except (ValueError, OverflowError):
        pass
    texts = arr.tolist()
    shaped = [bool(_TIME_SHAPE_RE.match(t)) for t in texts]
    try:
        if not all(shaped):
            raise ValueError("not ISO 8601")
        parsed = pd.to_datetime(texts, format="ISO8601", utc=True)
        if not parsed.isna().any():
            ns = parsed.as_unit("ns").asi8
            years = parsed.year
            if years.min() >= _MIN_YEAR and years.max() <= _MAX_YEAR:
                return np.asarray(ns, dtype=np.int64)
    except (ValueError, OverflowError):
        pass
    for j, text in enumerate(texts):
        where = locate(int(file_index[j]))
        try:
            if not shaped[j]:
                raise ValueError(text)
            ts = pd.to_datetime([text], format="ISO8601", utc=True)
            if ts.isna().any():
                raise ValueError(text)
        except (pd.errors.OutOfBoundsDatetime, OverflowError) as exc:
            raise CoordinateRangeError(
                f"{name}: {where}: time {_clip(text)} is outside the supported years {_MIN_YEAR}-{_MAX_YEAR}"
            ) from exc
        except ValueError as exc:
            raise CoordinateRangeError(f"{name}: {where}: time {_clip(text)} is not an ISO 8601 date and time") from exc
        if not _MIN_YEAR <= ts.year[0] <= _MAX_YEAR:
            raise CoordinateRangeError(
                f"{name}: {where}: time {_clip(text)} is outside the supported years {_MIN_YEAR}-{_MAX_YEAR}"
            )
    raise CoordinateRangeError(f"{name}: the track point times cannot be read")  # pragma: no cover


def _parse_times_numpy(arr: np.ndarray) -> np.ndarray:
    """Bulk parse of the common ISO 8601 forms; ValueError when any text is not one."""
    st = np.strings
    n = len(arr)
    zulu = st.endswith(arr, "Z")
    tail = st.slice(arr, -6, None)
    sign = st.slice(tail, 0, 1)
    offset = ~zulu & ((sign == "+") | (sign == "-")) & (st.slice(tail, 3, 4) == ":") & (st.str_len(arr) > 16)
    if zulu.all():  # the usual case: one copy, not three
        local = st.slice(arr, 0, -1)
    elif not (zulu.any() or offset.any()):
        local = arr
    else:
        local = np.where(zulu, st.slice(arr, 0, -1), np.where(offset, st.slice(arr, 0, -6), arr))
    # strict shape: YYYY-MM-DDThh:mm (numpy alone would also take "today", "NaT", +years)
    if not (
        np.all(st.isdecimal(st.slice(local, 0, 4)))
        and np.all(st.slice(local, 4, 5) == "-")
        and np.all(st.slice(local, 10, 11) == "T")
        and np.all(st.str_len(local) >= 16)
    ):
        raise ValueError("uncommon time form")
    years = st.slice(local, 0, 4).astype(np.int64)
    if years.min() < _MIN_YEAR or years.max() > _MAX_YEAR:
        raise ValueError("year out of range")
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # numpy warns when it meets a zone designator
        try:
            ns = local.astype("datetime64[ns]").astype(np.int64)
        except Warning as exc:
            raise ValueError(str(exc)) from None
    if np.any(offset):
        tail_o = tail[offset]
        minutes = st.slice(tail_o, 1, 3).astype(np.int64) * 60 + st.slice(tail_o, 4, 6).astype(np.int64)
        minutes = np.where(st.slice(tail_o, 0, 1) == "-", -minutes, minutes)
        if np.any(minutes > 18 * 60) or np.any(minutes < -18 * 60):
            raise ValueError("offset out of range")
        ns[offset] -= minutes * 60_000_000_000
    if len(ns) != n:  # pragma: no cover
        raise ValueError("length")
    return ns


def _warn_times(name: str, times: pd.DatetimeIndex) -> None:
    if times[0] < _GPS_EPOCH:
        warnings.warn(
            f"{name}: fix times start in {times[0].year}, before GPS time began (1980); "
            "the device clock was probably not set",
            DataQualityWarning,
            stacklevel=4,
        )
    elif times[-1] > pd.Timestamp.now(tz="UTC") + pd.Timedelta(days=1):
        warnings.warn(
            f"{name}: fix times reach {times[-1].year}, in the future; the device clock was probably wrong",
            DataQualityWarning,
            stacklevel=4,
        )


# ======================================================================================
# Summary of what was read (used by ``floatlift inspect``)
# ======================================================================================
#: An interval counts as irregular when it differs from the median by more than this share.
IRREGULAR_TOLERANCE = 0.5


def _iso_utc(ts: pd.Timestamp) -> str:
    text = ts.tz_convert("UTC").isoformat()
    return text.replace("+00:00", "Z")


def track_summary(track: Track) -> dict:
    """What the reader found in a file: counts, times, sampling, gaps, flags.

    Keys: ``file``, ``sha256``, ``creator``, ``gpx_version``, ``points``,
    ``points_in_file``, ``start_utc``, ``end_utc``, ``span_s``, ``interval_median_s``,
    ``interval_irregular_share`` (share of intervals off the median by more than
    :data:`IRREGULAR_TOLERANCE` of it), ``interval_min_s``, ``interval_max_s``,
    ``segments``, ``gaps`` (``threshold_s``, ``count``, ``longest_s``,
    ``longest_start_utc``), ``duplicates_merged``, ``reordered``, ``untimed_dropped``,
    ``reported_speed_points``, ``elevation_points``. Times are ISO 8601 UTC with ``Z``.
    """
    pts = track.points
    meta = track.meta
    t_ns = pts[COL_TIME].to_numpy(dtype="datetime64[ns]").astype(np.int64)
    dt_s = np.diff(t_ns) / 1e9
    median = float(np.median(dt_s))
    irregular = float(np.mean(np.abs(dt_s - median) > IRREGULAR_TOLERANCE * median))
    longest = max(meta.gaps, key=lambda g: g.duration_s) if meta.gaps else None
    return {
        "file": meta.source,
        "sha256": meta.sha256,
        "creator": meta.creator,
        "gpx_version": meta.gpx_version,
        "points": int(len(pts)),
        "points_in_file": int(meta.n_points_raw + meta.n_untimed_dropped),
        "start_utc": _iso_utc(track.start),
        "end_utc": _iso_utc(track.end),
        "span_s": float(track.duration_s),
        "interval_median_s": median,
        "interval_irregular_share": irregular,
        "interval_min_s": float(dt_s.min()),
        "interval_max_s": float(dt_s.max()),
        "segments": int(pts[COL_SEGMENT].nunique()),
        "gaps": {
            "threshold_s": float(meta.gap_threshold_s),
            "count": len(meta.gaps),
            "longest_s": None if longest is None else float(longest.duration_s),
            "longest_start_utc": None if longest is None else _iso_utc(longest.start),
        },
        "duplicates_merged": int(meta.n_duplicates_merged),
        "reordered": int(meta.n_reordered),
        "untimed_dropped": int(meta.n_untimed_dropped),
        "reported_speed_points": int(pts[COL_SPEED].notna().sum()),
        "elevation_points": int(pts[COL_ELE].notna().sum()),
    }
