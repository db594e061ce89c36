"""inkreach: pictures to checked joint-angle streams for two-motor pen arms.

The public names below load on first use (PEP 562), so ``import inkreach``
stays quick and a command pays only for the libraries it needs.

>>> import inkreach
>>> arm = inkreach.load_arm("default")
>>> arm.kind
'five-bar'
"""

import sys

if sys.argv[:1] == ["-m"] or (sys.argv[:1]
                             and sys.argv[0].endswith(("/inkreach", "\\inkreach"))):
    # started as a command: Ctrl-C while the libraries load stops quietly
    # (status 130); the command line takes Ctrl-C over once it runs
    try:
        from ._startup import quiet_interrupts as _quiet
        _quiet()
    except KeyboardInterrupt:  # before the quiet handler was in place
        raise SystemExit(130) from None

import importlib  # noqa: E402
import types  # noqa: E402

from .errors import InkreachError

__version__ = "0.1.0"

# public name -> the module that defines it
_LAZY = {
    "plan": ".plan", "Plan": ".plan",
    "load_arm": ".arms", "parse_arm": ".arms", "default_arm": ".arms",
    "example_arms": ".arms", "FiveBar": ".arms", "SerialArm": ".arms", "Limits": ".arms",
    "PenSpec": ".arms", "workspace_map": ".arms", "largest_rectangle": ".arms",
    "JointStream": ".motion", "check_stream": ".motion",
    "load_image": ".trace", "STYLES": ".trace", "style_options": ".trace",
    "fidelity": ".likeness", "Fidelity": ".likeness", "plan_fidelity": ".likeness",
    "tone_likeness": ".likeness", "ToneLikeness": ".likeness", "STYLE_RENDERS": ".trace",
}

__all__ = sorted(_LAZY) + ["InkreachError", "__version__"]


def __getattr__(name):
    try:
        module = _LAZY[name]
    except KeyError:
        raise AttributeError(f"module 'inkreach' has no attribute {name!r}") from None
    value = getattr(importlib.import_module(module, __name__), name)
    globals()[name] = value
    return value


def __dir__():
    return sorted(set(globals()) | set(_LAZY))


class _Package(types.ModuleType):
    """Keeps ``inkreach.plan`` the function.

    Importing the submodules of the same names would otherwise rebind the
    package attributes to the modules.
    """

    def __setattr__(self, name, value):
        if (name in _LAZY and isinstance(value, types.ModuleType)
                and value.__name__ == f"{__name__}.{name}"):
            return
        super().__setattr__(name, value)


sys.modules[__name__].__class__ = _Package
