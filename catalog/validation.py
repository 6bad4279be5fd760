"""Turn a pydantic validation failure into the one-line message users get (file, entry, field, value, expectation)."""
from __future__ import annotations

import json

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
        parent = model
        for part in err["loc"][:-1]:  # walk into nested models to list the right field names
            field = parent.model_fields.get(str(part)) if isinstance(part, str) else None
            ann = getattr(field, "annotation", None) if field else None
            if isinstance(ann, type) and issubclass(ann, BaseModel):
                parent = ann
        allowed = ", ".join(f.alias or n for n, f in parent.model_fields.items())
        return f"{prefix}: unknown field '{where}'; valid fields: {allowed}"
    if not where:
        return f"{prefix}: {expected}"
    return f"{prefix}: field '{where}' = {json.dumps(err.get('input'), default=str)}: {expected.lower()}"
