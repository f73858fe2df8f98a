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
SOON = (0.52, 0.27, 0.0, 1)  # "due soon": dark amber, readable as text on white (>= 4.5:1)
OK = (0.06, 0.42, 0.16, 1)
SELECTED = (0.80, 0.88, 1.0, 1)

TOUCH = dp(60)
TOUCH_MIN = dp(48)  # the smallest touch target allowed anywhere (gloves)
BAR = dp(22)  # scrollbar width: grabbable with a gloved finger
ROW = dp(72)
GAP = dp(10)
PAD = dp(16)
FONT = sp(20)
FONT_BIG = sp(26)
FONT_TITLE = sp(30)
FONT_SMALL = sp(16)

URGENCY_COLOURS = {"overdue": DANGER, "due_soon": SOON, "later": ACTION}
URGENCY_HEX = {"overdue": "#ad0f0a", "due_soon": "#854500", "later": "#0a3d85"}

STATE_COLOURS = {"open": DANGER, "attempted": WARN, "delayed": WARN, "repaired": ACTION, "closed": OK,
                 "void": MUTED}
