"""Exception and warning classes of floatlift.

Every error caused by outside input (a file, an option, a manifest) is a
:class:`FloatliftError`; the command line prints its message on one line and exits
with status 2. Each class also subclasses the matching built-in so callers that
only know Python's exceptions still catch it.
"""

from __future__ import annotations


class FloatliftError(Exception):
    """Base class of every error floatlift raises on purpose (bad input, bad state)."""


# --- reading tracks ---------------------------------------------------------------
class TrackReadError(FloatliftError, ValueError):
    """A GPX track could not be read."""


class FileTooLargeError(TrackReadError):
    """The file is larger than the configured size limit."""


class NotXMLError(TrackReadError):
    """The bytes are not XML (binary data, empty file, wrong encoding)."""


class TruncatedXMLError(TrackReadError):
    """The XML ends before its root element is closed."""


class ForbiddenXMLError(TrackReadError):
    """The XML declares a DTD or entities; those are never expanded."""


class NotGPXError(TrackReadError):
    """Well-formed XML whose root element is not a GPX 1.0/1.1 document."""


class NoTrackPointsError(TrackReadError):
    """The GPX holds no track points (only routes, waypoints or empty tracks)."""


class NoTimestampsError(TrackReadError):
    """The track points carry no usable times."""


class TooFewPointsError(TrackReadError):
    """Fewer than two timed track points."""


class CoordinateRangeError(TrackReadError):
    """A latitude, longitude or time is out of range or not a finite number."""


# --- other inputs -------------------------------------------------------------------
class BoardSpecError(FloatliftError, ValueError):
    """Board dimensions, outline or volume could not be understood."""


class RiderSpecError(FloatliftError, ValueError):
    """Rider data (mass, ability) could not be understood."""


class ConditionsError(FloatliftError, ValueError):
    """Water or wave conditions (temperature, salinity, preset, trim range) are not usable."""


class ManifestError(FloatliftError, ValueError):
    """A manifest linking tracks to riders, boards and conditions is malformed."""


class SimulationError(FloatliftError, ValueError):
    """Settings of the session simulator are out of range or a truth file is unreadable."""


class AnalysisError(FloatliftError, ValueError):
    """A track was read but cannot be analysed as a surf session."""


class StoreError(FloatliftError, RuntimeError):
    """The session library cannot be opened or written."""


class NotFoundError(FloatliftError, LookupError):
    """A rider, board or session named by the user does not exist."""


class LibraryInputError(FloatliftError, ValueError):
    """A value given to the session library (conditions, scores, names) is malformed or out of range."""


class ReportError(FloatliftError, OSError):
    """A report folder or file cannot be created or written."""


class DashboardError(FloatliftError, OSError):
    """The dashboard cannot be started (address in use, bad host or port, app missing)."""


class ModelValidityWarning(UserWarning):
    """A physical model is used outside its published range of validity."""


class DataQualityWarning(UserWarning):
    """The data are usable but of doubtful quality (gaps, outliers, odd values)."""
