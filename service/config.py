"""Defaults and the ``SHAPEGAUGE_*`` environment.

Every limit that bounds the work a request may ask for lives here, with a safe default.
``load_config()`` returns a plain dict that ``create_app`` hands to Flask; an explicit
``config`` mapping passed to ``create_app`` wins over the environment.
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from typing import Any, Callable

PREFIX = "SHAPEGAUGE_"


def _int(text: str) -> int:
    return int(text.replace("_", ""))


def _float(text: str) -> float:
    return float(text)


def _text(text: str) -> str:
    return text


# name -> (default, parser, what it bounds)
SETTINGS: dict[str, tuple[Any, Callable[[str], Any], str]] = {
    "MAX_BODY_BYTES": (64 * 1024 * 1024, _int, "largest request body accepted (413 beyond)"),
    "MAX_VALUES": (2_000_000, _int, "most values in one sample, missing ones included (413 beyond)"),
    "MAX_BATCH_SAMPLES": (1_000, _int, "most samples in one batch (413 beyond)"),
    "MAX_BATCH_VALUES": (5_000_000, _int, "most raw values in one batch, all samples together (413 beyond)"),
    "MAX_PARTS": (100_000, _int, "most shard partials, or histogram bins, in one sample (413 beyond)"),
    "FIT_STARTS": (4, _int, "starts per k of every mixture fit (one from quantiles, the rest k-means++)"),
    "FIT_MAX_ITERATIONS": (100, _int, "EM iterations per mixture fit (SQUAREM-accelerated)"),
    "FIT_TIME_LIMIT": (10.0, _float, "seconds one request's mixture fitting may take (a safety net, flagged when hit)"),
    "DEFAULT_ALPHA": (0.05, _float, "significance level when a request gives none"),
    "LOG_LEVEL": ("INFO", _text, "level of the service's own log lines"),
    "API_KEYS": ("", _text, "comma-separated API keys; when set (or API_KEYS_FILE), /v1/ needs one"),
    "API_KEYS_FILE": ("", _text, "file with one API key per line (# comments allowed)"),
    "CORS_ORIGINS": ("", _text, "comma-separated origins allowed to call from a browser, or *; empty: CORS off"),
}


def load_config(environ: Mapping[str, str] | None = None) -> dict[str, Any]:
    """Read the defaults, then every ``SHAPEGAUGE_<NAME>`` variable that is set.

    A value that does not parse is an error at start-up, naming the variable: a service
    that silently falls back to a default limit is worse than one that refuses to start.
    """
    environ = os.environ if environ is None else environ
    config: dict[str, Any] = {}
    for name, (default, parse, _what) in SETTINGS.items():
        raw = environ.get(PREFIX + name)
        if raw is None or raw.strip() == "":
            config[name] = default
            continue
        try:
            config[name] = parse(raw.strip())
        except ValueError as exc:
            raise ValueError(f"{PREFIX}{name}={raw!r} is not a valid value: {exc}") from None
    return config
