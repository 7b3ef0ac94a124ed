"""The dashboard's colours, defined once (used by the figures and the page theme).

A calm, paper-and-sea palette of our own: warm light background, dark slate text, one
teal accent, and one colour per activity state.
"""

from __future__ import annotations

BACKGROUND = "#f7f5f0"
PANEL = "#ebe7dd"
INK = "#26343b"
MUTED = "#7b8a8f"
ACCENT = "#2f6f73"
GRID = "#d9d4c7"

#: One colour per activity state of :data:`sessions.states.STATES`.
STATE_COLOURS = {
    "shore": "#c8b68e",  # sand
    "paddle": "#4d7ea8",  # sea blue
    "wait": "#9aa5a0",  # sage grey
    "ride": "#d9643a",  # rust
}
#: Plain words for the states, as the pages show them.
STATE_WORDS = {"shore": "on shore", "paddle": "paddling", "wait": "waiting", "ride": "riding"}
ONSET = "#123c45"  # deep teal-black: onset marks stand out from the grey speed trace
#: Colours of the boards in a comparison, in order (A first).
BOARD_COLOURS = ("#2f6f73", "#d9643a", "#6b5b95", "#8a9a3b", "#b0707a", "#4d7ea8")
