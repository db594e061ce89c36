"""Plans as jobs: the planner, the arm of an upload, progress, abandoned requests."""

import asyncio
import re
import threading
from collections import OrderedDict

from ..errors import InkreachError
from .errors import Abandoned, jsonable

__all__ = ["PROGRESS_ID", "default_planner", "resolve_upload_arm", "Progress", "unless_abandoned"]


PROGRESS_ID = re.compile(r"^[A-Za-z0-9_-]{8,64}$")


def default_planner(image, arm=None, style="outline", progress=None, **options):
    from ..plan import plan
    return plan(image, arm=arm, style=style, progress=progress, **options)


def resolve_upload_arm(value):
    """An Arm from a built-in name or arm-file text; never from a server path."""
    from ..arms import example_arms, load_arm, parse_arm

    if value is None:
        return None
    text = value.strip()
    if not text:
        return None
    if text in example_arms():
        return load_arm(text)
    if "=" not in text and "\n" not in text:
        raise InkreachError(f"arm {text[:40]!r} is not a built-in arm; use one of "
                            f"{', '.join(example_arms())}, or send the arm file's TOML text")
    return parse_arm(text, source="the uploaded arm file")


class Progress:
    """Latest stage of each running plan, by the id the page chose."""

    def __init__(self, keep=64):
        self._d = OrderedDict()
        self._lock = threading.Lock()
        self.keep = keep

    def set(self, token, stage, done=0, total=1):
        if token is None:
            return
        with self._lock:
            self._d[token] = {"stage": str(stage), "done": jsonable(done),
                              "total": jsonable(total)}
            self._d.move_to_end(token)
            while len(self._d) > self.keep:
                self._d.popitem(last=False)

    def get(self, token):
        with self._lock:
            return self._d.get(token)


async def unless_abandoned(request, fut, cancel, poll=0.25):
    """Wait for ``fut``; if the client disconnects first, tell the work to stop."""
    while True:
        done, _ = await asyncio.wait({fut}, timeout=poll)
        if done:
            return fut.result()
        gone = request.scope.get("inkreach.gone")
        if (gone is not None and gone.is_set()) or await request.is_disconnected():
            cancel.set()
            try:
                return await fut
            except Abandoned:
                raise
            except Exception:
                raise Abandoned() from None
