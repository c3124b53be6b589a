"""Reading the OpenRPC document and generating keyword-argument wrappers from it.

The document is ``openrpc.json`` in this package: a copy of the repository's
``schema/steamcell.openrpc.json`` (written by ``steamcell schema``) made by
``clients/python/sync_schema.py``. Every method of the document becomes a wrapper whose keyword
arguments are the fields of the method's one by-name params object, with a docstring built from
the document's summary, description and field descriptions.
"""

from __future__ import annotations

import inspect
import json
import keyword
import re
from pathlib import Path
from typing import Any, Callable, Dict, List, NamedTuple, Optional

DOCUMENT_PATH = Path(__file__).with_name("openrpc.json")


class Param(NamedTuple):
    name: str          # the wire name (a field of the params object), e.g. "T", "from"
    pyname: str        # the Python keyword, e.g. "T", "from_"
    required: bool
    description: str
    schema: Dict[str, Any]


def load_document(path: Optional[Path] = None) -> Dict[str, Any]:
    p = Path(path) if path else DOCUMENT_PATH
    with open(p, encoding="utf-8") as f:
        return json.load(f)


def resolve(doc: Dict[str, Any], schema: Any, depth: int = 0) -> Dict[str, Any]:
    """Follows ``$ref`` (#/components/schemas/X, #/definitions/X, #/$defs/X) and merges allOf."""
    if not isinstance(schema, dict) or depth > 20:
        return schema if isinstance(schema, dict) else {}
    if "$ref" in schema:
        ref = schema["$ref"]
        node: Any = doc
        if ref.startswith("#/"):
            for part in ref[2:].split("/"):
                node = node.get(part, {}) if isinstance(node, dict) else {}
        else:
            node = {}
        if not node:  # schemars may nest definitions in the schema itself
            name = ref.rsplit("/", 1)[-1]
            for key in ("definitions", "$defs"):
                node = schema.get(key, {}).get(name) or node
        merged = dict(resolve(doc, node, depth + 1))
        merged.update({k: v for k, v in schema.items() if k != "$ref"})
        return merged
    if "allOf" in schema:
        out: Dict[str, Any] = {k: v for k, v in schema.items() if k != "allOf"}
        props: Dict[str, Any] = dict(out.get("properties", {}))
        required: List[str] = list(out.get("required", []))
        for sub in schema["allOf"]:
            r = resolve(doc, sub, depth + 1)
            props.update(r.get("properties", {}))
            required.extend(r.get("required", []))
            for k, v in r.items():
                if k not in ("properties", "required"):
                    out.setdefault(k, v)
        out["properties"], out["required"] = props, required
        return out
    return schema


def pyname(name: str) -> str:
    """Python keyword for a wire field name: keywords get a trailing underscore."""
    n = re.sub(r"\W", "_", name)
    if keyword.iskeyword(n) or not n.isidentifier():
        n = n + "_"
    return n


def _is_wrapper_object(desc: Dict[str, Any], schema: Dict[str, Any]) -> bool:
    name = str(desc.get("name", ""))
    title = str(schema.get("title", ""))
    return ("properties" in schema or schema.get("type") == "object") and (
        name in ("params", "request", "args", "input") or title.endswith("Params")
        or name.endswith("Params"))


def method_params(doc: Dict[str, Any], method: Dict[str, Any]) -> List[Param]:
    """The keyword parameters of a method: the fields of its one by-name params object."""
    descs = method.get("params") or []
    descs = [resolve(doc, d) for d in descs]
    if len(descs) == 1:
        schema = resolve(doc, descs[0].get("schema", {}))
        if _is_wrapper_object(descs[0], schema):
            req = set(schema.get("required", []))
            return [Param(k, pyname(k), k in req,
                          str(resolve(doc, v).get("description", "")), resolve(doc, v))
                    for k, v in schema.get("properties", {}).items()]
    return [Param(d["name"], pyname(d["name"]), bool(d.get("required", False)),
                  str(d.get("description") or resolve(doc, d.get("schema", {})).get(
                      "description", "")),
                  resolve(doc, d.get("schema", {})))
            for d in descs]


def _type_hint(doc: Dict[str, Any], schema: Dict[str, Any]) -> str:
    s = resolve(doc, schema)
    if "anyOf" in s or "oneOf" in s:
        subs = [_type_hint(doc, x) for x in s.get("anyOf", s.get("oneOf", []))]
        subs = [x for x in subs if x and x != "null"]
        return " or ".join(dict.fromkeys(subs))
    t = s.get("type")
    if isinstance(t, list):
        return " or ".join(x for x in t if x != "null")
    if t == "array":
        return "list of " + (_type_hint(doc, s.get("items", {})) or "values")
    if t:
        return str(t)
    if "properties" in s:
        return "object"
    return ""


def _wrap_text(text: str, indent: str, width: int = 92) -> str:
    import textwrap
    return textwrap.fill(" ".join(text.split()), width=width, initial_indent=indent,
                         subsequent_indent=indent) if text.strip() else ""


def make_docstring(doc: Dict[str, Any], method: Dict[str, Any], params: List[Param]) -> str:
    lines = [method.get("summary") or method["name"], ""]
    if method.get("description"):
        lines += [_wrap_text(method["description"], ""), ""]
    lines.append(f"JSON-RPC method ``{method['name']}`` (generated from the OpenRPC document).")
    lines.append("")
    if params:
        lines.append("Keyword arguments:")
        for p in params:
            hint = _type_hint(doc, p.schema)
            head = f"    {p.pyname}"
            if p.pyname != p.name:
                head += f" (sent as {p.name!r})"
            head += " -- " + ("required" if p.required else "optional") + (f", {hint}" if hint else "")
            lines.append(head)
            if p.description:
                lines.append(_wrap_text(p.description, "        "))
        lines.append("")
    res = method.get("result")
    if isinstance(res, dict):
        rs = resolve(doc, res.get("schema", {}))
        rdesc = res.get("description") or rs.get("description") or rs.get("title") or ""
        lines.append("Returns: a Record (dict with attribute access); nested states are State objects.")
        if rdesc:
            lines.append(_wrap_text(rdesc, "    "))
    lines.append("Raises steamcell.Error subclasses (OutOfRange, InvalidParams, ...).")
    return "\n".join(lines).rstrip() + "\n"


def make_wrapper(doc: Dict[str, Any], method: Dict[str, Any]) -> Callable[..., Any]:
    """A function ``f(client, **kwargs)`` that calls the method with the given keywords."""
    name = method["name"]
    params = method_params(doc, method)
    by_py = {p.pyname: p.name for p in params}
    sig_params = [inspect.Parameter("self", inspect.Parameter.POSITIONAL_ONLY)]
    # required first so the signature is valid and readable
    for p in sorted(params, key=lambda p: not p.required):
        sig_params.append(inspect.Parameter(
            p.pyname, inspect.Parameter.KEYWORD_ONLY,
            default=inspect.Parameter.empty if p.required else None))
    signature = inspect.Signature(sig_params)

    def wrapper(self, **kwargs):
        bound = signature.bind(self, **kwargs)
        sent = {by_py[k]: v for k, v in bound.arguments.items()
                if k != "self" and v is not None}
        return self.call(name, **sent)

    wrapper.__name__ = pyname(name.replace(".", "_"))
    wrapper.__qualname__ = "Client." + wrapper.__name__
    wrapper.__signature__ = signature  # type: ignore[attr-defined]
    wrapper.__doc__ = make_docstring(doc, method, params)
    wrapper.rpc_method = name  # type: ignore[attr-defined]
    wrapper.rpc_params = {p.name for p in params}  # type: ignore[attr-defined]
    wrapper.rpc_required = {p.name for p in params if p.required}  # type: ignore[attr-defined]
    return wrapper


def make_wrappers(doc: Dict[str, Any]) -> Dict[str, Callable[..., Any]]:
    """Wrapper per method name, e.g. {"turbine.expand": <function turbine_expand>}."""
    return {m["name"]: make_wrapper(doc, m) for m in doc.get("methods", [])}
