"""Turn a pydantic validation failure into the one-line message users get (file, entry, field, value, expectation)."""
from __future__ import annotations

import json
import math
import typing

from pydantic import BaseModel, ValidationError


def validate_entry(model: type[BaseModel], raw, prefix: str, error: type[Exception]):
    """Validate ``raw`` against ``model``; on failure raise ``error`` with one line.

    ``prefix`` names where the data came from (e.g. "materials.toml: material 'x'"); the line then
    reads ``<prefix>: field '<dotted.field>' = <value>: <what was expected>``.
    """
    if not isinstance(raw, dict):
        raise error(f"{prefix}: expected a table of fields, got {raw!r}")
    try:
        return model.model_validate(raw)
    except ValidationError as exc:
        raise error(one_line(exc, model, prefix)) from None


def one_line(exc: ValidationError, model: type[BaseModel], prefix: str) -> str:
    """The first error of ``exc`` as one readable line."""
    errors = exc.errors(include_url=False)
    # a misspelt key shows up twice (unknown field, and the real one missing): name the typo first
    err = next((e for e in errors if e["type"] == "extra_forbidden"), errors[0])
    where = ".".join(str(p) for p in err["loc"])
    expected = err["msg"].removeprefix("Value error, ")
    if err["type"] == "missing":
        return f"{prefix}: field '{where}' is missing: this field is required"
    if err["type"] == "extra_forbidden":
        parent = _model_at(model, err["loc"][:-1])
        allowed = ", ".join(f.alias or n for n, f in parent.model_fields.items())
        return f"{prefix}: unknown field '{where}'; valid fields: {allowed}"
    if not where:
        return f"{prefix}: {expected}"
    if err["type"] == "value_error":          # a check across fields: say what is wrong, not the whole section
        return f"{prefix}: {where}: {expected}"
    return f"{prefix}: field '{where}' = {_as_written(err.get('input'))}: {_lower_first(expected)}"


def _as_written(value) -> str:
    """A value as the user wrote it in TOML (inf and nan included)."""
    if isinstance(value, float) and not math.isfinite(value):
        return "nan" if math.isnan(value) else ("inf" if value > 0 else "-inf")
    return json.dumps(value, default=str)


def _lower_first(text: str) -> str:
    """'Input should be ...' -> 'input should be ...'; allowed values and patterns keep their case."""
    return text[:1].lower() + text[1:]


def _model_at(model: type[BaseModel], loc) -> type[BaseModel]:
    """The model that holds the field at ``loc`` (through nested models and lists of them)."""
    parent = model
    for part in loc:
        if not isinstance(part, str):
            continue                              # an index into a list: same model
        field = parent.model_fields.get(part)
        ann = getattr(field, "annotation", None) if field else None
        candidates = [ann] + list(typing.get_args(ann)) if ann is not None else []
        for c in candidates:
            inner = [c] + list(typing.get_args(c))
            found = next((x for x in inner if isinstance(x, type) and issubclass(x, BaseModel)), None)
            if found:
                parent = found
                break
    return parent
