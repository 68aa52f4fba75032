"""One-line reports of validation errors: 'source: key: what is wrong; allowed: ...'.

A pydantic ``ValidationError`` lists its problems as entries with a ``type``, a ``loc``
(the path of keys and list positions), the ``input`` and, for the scenario's own checks, a
``ctx`` holding the report's two halves (pydantic v2 documentation, error handling). This
module turns the first of them into the one line a user reads: the key as the user finds
it in the TOML (``satellite #2 (TARNBECK).downlink_mhz``), what is wrong and what is
allowed, the allowed part read from the models themselves (ranges, choices, required keys,
a field's description). :func:`validated` does the same for models built from
command-line options.
"""

from __future__ import annotations

import difflib
import types
import typing
from collections.abc import Mapping
from typing import Annotated, Any, Literal

from pydantic import BaseModel, ValidationError
from pydantic.fields import FieldInfo

from planner.errors import UserError
from planner.scenario import schema
from planner.scenario.fields import _Range, _show


def _one_line(text: str) -> str:
    """Escape anything that would break a message over lines or hide characters."""
    return "".join(c if c.isprintable() else c.encode("unicode_escape").decode("ascii") for c in text)


def _models_here() -> dict[str, type[BaseModel]]:
    """The scenario's models by class name (a ValidationError's title names its model)."""
    return {
        value.__name__: value
        for value in vars(schema).values()
        if isinstance(value, type) and issubclass(value, BaseModel) and value.__module__ == schema.__name__
    }


def _unwrap(annotation: Any) -> tuple[Any, list[Any]]:
    """(base type, metadata) of an annotation, looking through Annotated and Optional."""
    metadata: list[Any] = []
    while True:
        origin = typing.get_origin(annotation)
        if origin is Annotated:
            args = typing.get_args(annotation)
            annotation, metadata = args[0], metadata + list(args[1:])
            continue
        if origin in (typing.Union, types.UnionType):
            members = [a for a in typing.get_args(annotation) if a is not type(None)]
            if len(members) == 1:
                annotation = members[0]
                continue
        return annotation, metadata


def _model_in(annotation: Any) -> tuple[type[BaseModel] | None, bool]:
    """The model a field holds, and whether it holds a list of them ([[table]])."""
    base, _ = _unwrap(annotation)
    if isinstance(base, type) and issubclass(base, BaseModel):
        return base, False
    if typing.get_origin(base) is list:
        args = typing.get_args(base)
        if args:
            inner, _ = _unwrap(args[0])
            if isinstance(inner, type) and issubclass(inner, BaseModel):
                return inner, True
    return None, False


def _walk(root: type[BaseModel] | None, loc: tuple[Any, ...]) -> tuple[type[BaseModel] | None, FieldInfo | None]:
    """The model that holds the last key of ``loc``, and that key's field (if known)."""
    model, field = root, None
    for position, part in enumerate(loc):
        if isinstance(part, int):
            continue
        if model is None:
            return None, None
        field = model.model_fields.get(part)
        if position == len(loc) - 1:
            return model, field
        if field is None:
            return None, None
        model, _ = _model_in(field.annotation)
    return model, field


def _allowed_for(field: FieldInfo | None, key: str) -> str:
    """What a field accepts, in words, for missing-key and wrong-type reports."""
    if field is None:
        return "see the scenario file documentation"
    if field.description:
        return field.description
    model, is_list = _model_in(field.annotation)
    if model is not None:
        required = [name for name, f in model.model_fields.items() if f.is_required()]
        table = f"[[{key}]] tables" if is_list else f"a [{key}] table"
        head = f"one or more {table}" if is_list else table
        return f"{head} with at least {', '.join(required)}" if required else head
    base, metadata = _unwrap(field.annotation)
    for item in metadata + list(field.metadata):
        if isinstance(item, _Range):
            kind = "a whole number" if base is int else "a number"
            return f"{kind}, {item.allowed()}"
    if typing.get_origin(base) is Literal:
        return "one of " + ", ".join(f'"{choice}"' for choice in typing.get_args(base))
    if base is bool:
        return "true or false"
    if base is str:
        return "text in quotes"
    if base is float:
        return "a number"
    if base is int:
        return "a whole number"
    return "see the scenario file documentation"


def _key_text(loc: tuple[Any, ...], data: Any, key_names: Mapping[str, str] | None) -> str:
    """A location the way a user finds it: 'satellite #2 (TARNBECK).downlink_mhz'."""
    parts: list[str] = []
    node = data
    for position, part in enumerate(loc):
        if isinstance(part, int):
            label = f"#{part + 1}"
            item = node[part] if isinstance(node, list) and 0 <= part < len(node) else None
            name = item.get("name") if isinstance(item, Mapping) else None
            if isinstance(name, str) and name.strip():
                label += f" ({name if len(name) <= 40 else name[:37] + '...'})"
            if parts:
                parts[-1] += " " + label
            else:
                parts.append(label)
            node = item
        else:
            text = str(part)
            if position == 0 and key_names and text in key_names:
                text = key_names[text]
            parts.append(text)
            node = node.get(part) if isinstance(node, Mapping) else None
    return ".".join(parts) if parts else "(top level)"


def _describe_one(
    err: Mapping[str, Any],
    root: type[BaseModel] | None,
    data: Any,
    key_names: Mapping[str, str] | None,
) -> str:
    ctx = err.get("ctx") or {}
    loc = tuple(err.get("loc", ())) + tuple(ctx.get("at", ()))
    key = _key_text(loc, data, key_names)
    kind = err.get("type", "")
    value = err.get("input")
    model, field = _walk(root, loc)
    last = str(loc[-1]) if loc else ""
    allowed_here = _allowed_for(field, last)

    if "problem" in ctx and "allowed" in ctx:
        return f"{key}: {ctx['problem']}; allowed: {ctx['allowed']}"
    if kind == "extra_forbidden":
        if model is None:
            return f"{key}: unknown key"
        names = list(model.model_fields)
        hint = difflib.get_close_matches(last, names, n=1, cutoff=0.7)
        problem = f"unknown key (did you mean {hint[0]}?)" if hint else "unknown key"
        return f"{key}: {problem}; allowed keys: {', '.join(names)}"
    if kind == "missing":
        sub, _ = _model_in(field.annotation) if field is not None else (None, False)
        what = "missing required table" if sub is not None else "missing required key"
        return f"{key}: {what}; allowed: {allowed_here}"
    if kind in ("float_type", "float_parsing", "finite_number"):
        if isinstance(value, int) and not isinstance(value, bool):
            return f"{key}: {_show(value)} is too large a number; allowed: {allowed_here}"
        return f"{key}: expected a number, got {_show(value)}; allowed: {allowed_here}"
    if kind in ("int_type", "int_parsing", "int_from_float"):
        return f"{key}: expected a whole number, got {_show(value)}; allowed: {allowed_here}"
    if kind in ("string_type", "str_type"):
        return f"{key}: expected text in quotes, got {_show(value)}; allowed: {allowed_here}"
    if kind in ("bool_type", "bool_parsing"):
        return f"{key}: expected true or false, got {_show(value)}; allowed: {allowed_here}"
    if kind == "literal_error":
        return f"{key}: {_show(value)} is not one of the choices; allowed: {allowed_here}"
    if kind in ("model_type", "model_attributes_type", "dict_type"):
        return f"{key}: expected a table, got {_show(value)}; allowed: {allowed_here}"
    if kind == "list_type":
        sub, is_list = _model_in(field.annotation) if field is not None else (None, False)
        if is_list and isinstance(value, Mapping):
            return f"{key}: expected [[{last}]] tables (double brackets), got a single table; allowed: {allowed_here}"
        return f"{key}: expected a list, got {_show(value)}; allowed: {allowed_here}"
    message = str(err.get("msg", "invalid value"))
    return f"{key}: {message} (got {_show(value)}); allowed: {allowed_here}"


def describe_validation_error(
    error: ValidationError,
    source: str,
    *,
    data: Any = None,
    key_names: Mapping[str, str] | None = None,
    model: type[BaseModel] | None = None,
) -> str:
    """One line for the first problem in ``error``: 'source: key: what is wrong; allowed: ...'.

    ``data`` is the raw input (the parsed TOML); with it, entries of ``[[...]]`` lists are
    named ('satellite #2 (TARNBECK)'). ``key_names`` maps top-level field names to the names
    the user typed (command-line options such as ``{"latitude_deg": "--lat"}``). ``model``
    is the model that was validated; by default it is found from the error's title.
    """
    # An unknown key usually explains the missing or wrong keys reported with it (a
    # misspelt name), so unknown keys are reported first; otherwise the file order.
    errors = sorted(error.errors(include_url=False), key=lambda e: e.get("type") != "extra_forbidden")
    root = model if model is not None else _models_here().get(error.title)
    if not errors:
        return _one_line(f"{source}: invalid input")
    line = f"{source}: {_describe_one(errors[0], root, data, key_names)}"
    more = len(errors) - 1
    if more:
        line += f" (and {more} more problem{'s' if more > 1 else ''})"
    return _one_line(line)


_M = typing.TypeVar("_M", bound=BaseModel)


def validated(
    model_cls: type[_M],
    values: Mapping[str, Any],
    source: str,
    *,
    key_names: Mapping[str, str] | None = None,
    context: Mapping[str, Any] | None = None,
) -> _M:
    """Build ``model_cls`` from ``values``; a problem becomes a one-line UserError.

    For models built from command-line options: ``validated(StationConfig, {...},
    "command line", key_names={"latitude_deg": "--lat"})`` reports
    'command line: --lat: 91 is out of range; allowed: -90 to 90'. ``context`` may hold
    ``base_dir`` (folder for relative elements paths; default the working folder) and
    ``check_files`` (False skips the check that elements files exist; default True).
    """
    try:
        return model_cls.model_validate(dict(values), context=dict(context or {}))
    except ValidationError as exc:
        raise UserError(describe_validation_error(exc, source, data=dict(values), key_names=key_names, model=model_cls)) from None
