"""Look of the tablet app: high contrast for sunlight, big type and glove-sized touch targets.

Dark ink on a near-white ground reads best in direct sun; colours carry meaning only together with
a word (OVERDUE, HAZARD), never alone.
"""

from kivy.metrics import dp, sp

BG = (0.97, 0.97, 0.95, 1)
PANEL = (1, 1, 1, 1)
INK = (0.04, 0.04, 0.05, 1)
MUTED = (0.28, 0.30, 0.33, 1)
LINE = (0.55, 0.58, 0.62, 1)
ACTION = (0.04, 0.24, 0.52, 1)
ACTION_TEXT = (1, 1, 1, 1)
DANGER = (0.68, 0.06, 0.04, 1)
WARN = (0.80, 0.40, 0.0, 1)
OK = (0.06, 0.42, 0.16, 1)
SELECTED = (0.80, 0.88, 1.0, 1)

TOUCH = dp(60)
ROW = dp(72)
GAP = dp(10)
PAD = dp(16)
FONT = sp(20)
FONT_BIG = sp(26)
FONT_TITLE = sp(30)
FONT_SMALL = sp(16)

STATE_COLOURS = {"open": DANGER, "attempted": WARN, "delayed": WARN, "repaired": ACTION, "closed": OK,
                 "void": MUTED}
