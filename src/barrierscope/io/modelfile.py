"""Model files: JSON with a format name, a schema version and a checksum. Never pickle.

Loading reads text, parses JSON (nothing is executed or unpickled), checks the format name
and schema version, verifies the SHA-256 checksum over the canonical JSON of the content,
and checks the schema's required fields and their types before anything is built from it.
A file that was edited, truncated, or written by an unknown version is refused with a
message that says which.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
from datetime import datetime, timezone
from pathlib import Path

from .. import __version__
from ..errors import ModelFileError
from .atomic import write_text_atomic

FORMAT = "barrierscope-model"
SCHEMA_VERSION = 2

# Required fields of schema version 2: name → type (dict for nested requirements).
_SCHEMA = {
    "input": {"mode": str, "columns": list, "positions": list},
    "tiers": list, "features": list, "extra_descriptors": list, "learner": str, "relation": str,
    "units": str, "energy_kind": str, "energy_column": str, "barrier_column": str, "level": float,
    "primary_route": str,
    "two_stage": {"params": dict, "curve": {"relation": str, "theta": list, "cov": list, "sigma": float,
                                            "dof": int, "n_train": int, "energy_range": list}},
    "domain": {"k": int, "quantile": float, "energy_range": list},
    "training": {"n": int}, "validation": dict,
}
_OPTIONAL_DICTS = ("hybrid", "direct", "prediction_intervals", "joint", "structure")


def canonical_json(obj) -> str:
    return json.dumps(obj, sort_keys=True, separators=(",", ":"), ensure_ascii=False, allow_nan=False)


def checksum(content: dict) -> str:
    return "sha256:" + hashlib.sha256(canonical_json(content).encode("utf-8")).hexdigest()


def json_ready(obj):
    """Plain JSON values: non-finite floats become None (JSON has no NaN), numpy scalars and
    arrays become Python numbers and lists."""
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {k: json_ready(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [json_ready(v) for v in obj]
    if hasattr(obj, "tolist") and not isinstance(obj, (str, bytes)):  # numpy scalars and arrays
        return json_ready(obj.tolist())
    return obj


def dumps(content: dict) -> str:
    content = json_ready(content)
    envelope = {"format": FORMAT, "schema_version": SCHEMA_VERSION, "barrierscope_version": __version__,
                "created": datetime.now(timezone.utc).isoformat(timespec="seconds"), "content": content}
    envelope["checksum"] = checksum(content)
    return json.dumps(envelope, indent=1, ensure_ascii=False, allow_nan=False) + "\n"


def save(content: dict, path: str | os.PathLike) -> None:
    """Write the model atomically (temporary file, then rename)."""
    write_text_atomic(path, dumps(content))


def _check(obj, schema: dict, where: str) -> None:
    if not isinstance(obj, dict):
        raise ModelFileError(f"{where} should be an object")
    for key, kind in schema.items():
        if key not in obj:
            raise ModelFileError(f"{where} lacks the required field {key!r}")
        value = obj[key]
        if isinstance(kind, dict):
            _check(value, kind, f"{where}.{key}")
        elif kind is float:
            if not isinstance(value, (int, float)) or isinstance(value, bool):
                raise ModelFileError(f"{where}.{key} should be a number")
        elif not isinstance(value, kind) or (kind is int and isinstance(value, bool)):
            raise ModelFileError(f"{where}.{key} should be of type {kind.__name__}")


def loads(text: str, source: str = "model file") -> dict:
    """The validated content of a model file's text (raises :class:`ModelFileError`)."""
    try:
        envelope = json.loads(text)
    except json.JSONDecodeError as exc:
        hint = " (it looks truncated)" if exc.pos >= len(text.rstrip()) - 1 else ""
        raise ModelFileError(f"{source}: not valid JSON{hint}: {exc.msg} at line {exc.lineno}") from None
    if not isinstance(envelope, dict) or envelope.get("format") != FORMAT:
        raise ModelFileError(f"{source}: not a barrierscope model file (format field missing or different)")
    version = envelope.get("schema_version")
    if version != SCHEMA_VERSION:
        raise ModelFileError(f"{source}: schema version {version!r} is not one this barrierscope reads "
                             f"(it reads version {SCHEMA_VERSION}); refit the model or use the matching release")
    content = envelope.get("content")
    stated = envelope.get("checksum")
    if not isinstance(content, dict) or not isinstance(stated, str):
        raise ModelFileError(f"{source}: the content or its checksum is missing")
    try:
        actual = checksum(content)
    except ValueError:
        raise ModelFileError(f"{source}: the content holds values JSON does not allow") from None
    if actual != stated:
        raise ModelFileError(f"{source}: the checksum does not match the content — the file was edited or "
                             f"damaged after it was written; refit or restore it")
    _check(content, _SCHEMA, "content")
    for key in _OPTIONAL_DICTS:
        if content.get(key) is not None and not isinstance(content[key], dict):
            raise ModelFileError(f"content.{key} should be an object or null")
    if content["input"]["mode"] != "none" and not isinstance(content["two_stage"].get("energy_stage"), dict):
        raise ModelFileError("content.two_stage.energy_stage is required for a model with structures")
    return content


def load(path: str | os.PathLike) -> dict:
    p = Path(path)
    if not p.exists():
        raise ModelFileError(f"{p}: no such model file")
    try:
        text = p.read_text(encoding="utf-8")
    except UnicodeDecodeError:
        raise ModelFileError(f"{p}: not a text file, so not a barrierscope model") from None
    if not text.strip():
        raise ModelFileError(f"{p}: the model file is empty")
    return loads(text, str(p))


def load_model(path: str | os.PathLike):
    """The :class:`~barrierscope.jobs.model.FamilyModel` in a model file."""
    from ..jobs.model import FamilyModel

    content = load(path)
    try:
        return FamilyModel.from_dict(content)
    except (KeyError, TypeError, ValueError, IndexError) as exc:
        raise ModelFileError(f"{path}: the model's content is inconsistent ({type(exc).__name__}: {exc})") from None
