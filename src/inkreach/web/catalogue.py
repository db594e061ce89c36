"""What the page offers: the styles with their options, and the common options."""

from .errors import jsonable

__all__ = ["style_table", "common_options"]


def style_table():
    """Styles, what they render, and their options with labels and units (the arm
    sets the pen width, so it is left out)."""
    from ..trace import style_catalogue

    return jsonable(style_catalogue())


_COMMON = [
    ("size", "length of the drawing's longer side in mm, 1 to 5000 (empty: as large as fits)"),
    ("paper", "paper rectangle in arm mm: x, y, width, height (empty: no paper, the whole "
              "usable region)"),
    ("margin", "keep this many mm clear inside the paper's edge, 0 to 1000 (needs paper)"),
    ("prefer", "'largest' drawing, or 'isotropic' for the best-conditioned spot"),
    ("tip_speed", "pen speed while drawing, mm/s, 0.01 to 10000 (empty: as fast as the motors "
                  "allow)"),
    ("chord_tol", "largest gap between the drawn chord and the true line, mm, 0.005 to 10 "
                  "(finer no motor follows)"),
    ("tilt", "'true' also tries tilted drawings, which may draw larger; then lay the "
             "paper turned as the figures say"),
    ("signals", "motor signals to make: auto (from the arm file), servo, stepper, both or "
                "none"),
]


def common_options():
    from ..plan import MOTION_OPTIONS, PLACE_OPTIONS

    from ..trace import option_label

    defaults = {**PLACE_OPTIONS, **MOTION_OPTIONS, "signals": "auto"}
    return [{"name": k, "label": option_label(k)[0], "unit": option_label(k)[1],
             "default": jsonable(defaults.get(k)), "help": h} for k, h in _COMMON]
