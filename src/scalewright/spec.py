"""The scale file: read it safely, check every part of it, and give back an immutable ``ScaleSpec``.

The YAML is composed into nodes (never constructed into objects), so no tag can run code, and every
problem can name the line it stands on. All problems are collected and reported at once.
"""
from __future__ import annotations

from pathlib import Path
from types import MappingProxyType

import yaml

from .errors import Problem, SpecError
from .limits import MAX_YAML_BYTES
from .spec_checker import SpecChecker
from .spec_groups import read_groups
from .spec_model import DEFAULT_MISSING_TEXTS, TOP_KEYS, ResponseFormat, Scale, ScaleSpec
from .yaml_guard import ShapeProblem, check_yaml_shape


def check_spec(path: str | Path) -> tuple[ScaleSpec | None, list[Problem]]:
    """Read and check a scale file; return the spec (None if unusable) and every problem found."""
    path_text = str(path)
    try:
        raw = Path(path).read_bytes()
    except FileNotFoundError:
        return None, [Problem(file=path_text, message="scale file not found")]
    except IsADirectoryError:
        return None, [Problem(file=path_text, message="is a folder, not a scale file")]
    except OSError as error:
        return None, [Problem(file=path_text, message=f"cannot read: {error.strerror}")]
    if len(raw) > MAX_YAML_BYTES:
        return None, [Problem(file=path_text, message=f"the scale file is larger than {MAX_YAML_BYTES // 2**20} MiB "
                                                      "(see docs/limits.md)")]
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as error:
        return None, [Problem(file=path_text, message=f"not UTF-8 text (byte 0x{raw[error.start]:02x} at offset "
                                                      f"{error.start}); save it as UTF-8")]
    try:
        check_yaml_shape(text)
        root = yaml.compose(text, Loader=yaml.SafeLoader)
    except ShapeProblem as problem:
        return None, [Problem(file=path_text, line=problem.line, message=problem.message)]
    except RecursionError:  # not reached within the depth limit; kept so no input can show a traceback
        return None, [Problem(file=path_text, message="the scale file is nested too deeply")]
    except yaml.MarkedYAMLError as error:
        mark = error.problem_mark or error.context_mark
        return None, [Problem(file=path_text, line=mark.line + 1 if mark else None,
                              message=f"not valid YAML: {error.problem or error.context}")]
    except yaml.YAMLError as error:
        return None, [Problem(file=path_text, message=f"not valid YAML: {str(error).strip().splitlines()[0] if str(error).strip() else type(error).__name__}")]
    checker = SpecChecker(path_text)
    if root is None:
        return None, [Problem(file=path_text, message="the scale file is empty")]
    checker.check_tags(root)
    keys = checker.mapping(root, "", TOP_KEYS)
    if keys is None:
        return None, checker.problems
    version = 1
    if "version" in keys:
        value = checker.number(keys["version"][1], "version", integer=True)
        if value is not None and value != 1:
            checker.problem(keys["version"][1], "version", f"version {value} is not supported; this tool reads version 1")
    title = checker.text(keys["title"][1], "title") if "title" in keys else None
    id_column = checker.text(keys["id_column"][1], "id_column") if "id_column" in keys else None
    group_codes: dict[str, dict[str, str]] = {}
    groups, group_levels = read_groups(checker, keys["groups"][1], group_codes) if "groups" in keys else ([], {})
    weight = checker.text(keys["weight"][1], "weight") if "weight" in keys else None
    checker.top_response_given = "response" in keys
    if "missing_texts" in keys:
        checker.top_missing_texts = checker.text_values(keys["missing_texts"][1], "missing_texts") or ()
        checker.top_missing_texts_node = keys["missing_texts"][1]
    base = checker.response(keys["response"][1], "response", None) if "response" in keys else None
    scales: dict[str, Scale] = {}
    if "scales" not in keys:
        checker.problem(root, "scales", "the scale file defines no `scales`")
    else:
        scale_nodes = checker.mapping(keys["scales"][1], "scales", None) or {}
        if not scale_nodes and isinstance(keys["scales"][1], yaml.MappingNode):
            checker.problem(keys["scales"][1], "scales", "no scales are defined")
        for name, (name_node, node) in scale_nodes.items():
            scale = checker.scale(name, name_node, node, base)
            if scale is not None:
                scales[name] = scale
    _check_across_scales(checker, scales, id_column, groups, keys)
    if checker.problems:
        return None, checker.problems
    spec = ScaleSpec(title=title or Path(path).stem, id_column=id_column, groups=tuple(groups),
                     group_levels=MappingProxyType(group_levels),
                     missing_texts=DEFAULT_MISSING_TEXTS if checker.top_missing_texts is None
                     else checker.top_missing_texts,
                     group_codes=MappingProxyType({c: MappingProxyType(m) for c, m in group_codes.items()}),
                     response=base or next(iter(scales.values())).response,
                     scales=MappingProxyType(scales), path=path_text, version=version, weight=weight)
    return spec, []



def _check_across_scales(checker: SpecChecker, scales: dict[str, Scale], id_column: str | None,
                         groups: list[str], keys: dict) -> None:
    formats: dict[str, tuple[str, ResponseFormat]] = {}
    for scale in scales.values():
        for item in scale.items:
            if item in formats and formats[item][1] != scale.response:
                other = formats[item][0]
                checker.problems.append(Problem(
                    file=checker.path, line=scale.line, where=f"scales.{scale.name}.items",
                    message=f"item {item!r} also belongs to scale {other!r} with a different answer format"))
            formats.setdefault(item, (scale.name, scale.response))
    special = {id_column: "id_column"} if id_column else {}
    special.update({group: "groups" for group in groups})
    if "weight" in keys and isinstance(keys["weight"][1], yaml.ScalarNode):
        special[str(keys["weight"][1].value).strip()] = "weight"
    for item, (scale_name, _) in formats.items():
        if item in special:
            checker.problems.append(Problem(file=checker.path, line=scales[scale_name].line,
                                            where=f"scales.{scale_name}.items",
                                            message=f"{item!r} is also named in `{special[item]}`"))
        if item in scales and item != scale_name:
            pass  # an item may share a name with a scale; scored columns are distinct files
    for name in scales:
        if name.endswith("__answered"):
            checker.problems.append(Problem(file=checker.path, line=scales[name].line, where=f"scales.{name}",
                                            message="scale names may not end in '__answered'"))


def load_spec(path: str | Path) -> ScaleSpec:
    """Read a scale file; raise ``SpecError`` listing every problem when it is not valid."""
    spec, problems = check_spec(path)
    if problems or spec is None:
        raise SpecError(problems or [Problem(file=str(path), message="unusable scale file")])
    return spec
