"""The local web page: drop in a picture, see the plan, download the files."""

from .app import create_app
from .forms import parse_options, parse_value
from .preview import decimate_strokes, preview_data, region_outline
from .serve import serve
from .store import PlanStore

__all__ = ["create_app", "serve", "PlanStore", "parse_options", "parse_value",
           "decimate_strokes", "region_outline", "preview_data"]
