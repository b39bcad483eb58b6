"""Keep CF references whole in what frameshift writes.

A CF variable points at others by name: ``grid_mapping`` (§5.6),
``formula_terms`` (§4.3.3), ``bounds`` and ``climatology`` (§7.1, §7.4),
``cell_measures`` (§7.2), ``ancillary_variables`` (§3.4), and a gathered
dimension's ``compress`` names dimensions (§8.2). Discrete sampling
geometries (§9) rest on their instance variable (``cf_role``) and on the
count or index variable of a ragged array (``sample_dimension``,
``instance_dimension``). ``cell_methods`` (§7.3) names dimensions.

:func:`reconcile` takes an operation's result and the Dataset it was made
from and returns a result in which every such reference resolves: what a
kept variable refers to is brought back from the input, or, when the input
does not have it either, the reference is removed and the variable's
``comment`` says so. A new variable computed on the same points as input
variables that share one ``grid_mapping`` or ``cell_measures`` gets it too
(the terms of a rotated-pole wind lie on the same rotated grid). Nothing is
computed: only metadata are read, so Dask-backed data stay lazy.
"""

from __future__ import annotations

import re

import xarray as xr

__all__ = ["dangling_references", "reconcile", "references"]

#: attribute -> how its value names variables
_PAIRS = ("formula_terms", "cell_measures")  # "key: name key: name"
_SINGLE = ("bounds", "climatology")
_LIST = ("ancillary_variables",)
_INHERITED = ("grid_mapping", "cell_measures")
_ASIDE = "feature_type_before_conversion"


def references(attrs: dict) -> dict[str, list[str]]:
    """Variable names each reference attribute of ``attrs`` points at.

    Examples
    --------
    >>> references({"grid_mapping": "crs: lat lon", "formula_terms": "sigma: s eta: zeta"})
    {'formula_terms': ['s', 'zeta'], 'grid_mapping': ['crs']}
    """
    found: dict[str, list[str]] = {}
    for key in _PAIRS:
        if isinstance(attrs.get(key), str):
            found[key] = re.findall(r"\S+:\s+(\S+)", attrs[key])
    for key in _SINGLE + _LIST:
        if isinstance(attrs.get(key), str):
            found[key] = attrs[key].split()
    if isinstance(attrs.get("grid_mapping"), str):
        text = attrs["grid_mapping"]
        # "name" or, from CF 1.7, "name: coord coord name2: coord"
        found["grid_mapping"] = re.findall(r"(\S+):", text) if ":" in text else text.split()
    return found


def _cell_method_names(text: str) -> list[str]:
    # "name: [name: ...] method [where ...] [over ...] [(comment)]"
    text = re.sub(r"\([^)]*\)", " ", text)
    return re.findall(r"(\S+):", text)


def dangling_references(ds: xr.Dataset) -> list[str]:
    """One line per reference of ``ds`` that does not resolve (empty when whole).

    Examples
    --------
    >>> import xarray as xr
    >>> dangling_references(xr.Dataset({"a": ((), 1.0, {"grid_mapping": "crs"})}))
    ["a: grid_mapping names 'crs', which is absent"]
    """
    problems = []
    dims = set(map(str, ds.dims))
    for name, var in ds.variables.items():
        for key, targets in references(var.attrs).items():
            for target in targets:
                if target not in ds.variables:
                    problems.append(f"{name}: {key} names {target!r}, which is absent")
        compress = var.attrs.get("compress")
        if isinstance(compress, str):
            for dim in compress.split():
                if dim not in dims:
                    problems.append(f"{name}: compress names dimension {dim!r}, which is absent")
        methods = var.attrs.get("cell_methods")
        if isinstance(methods, str):
            for dim in _cell_method_names(methods):
                if not _method_name_ok(ds, var, dim):
                    problems.append(f"{name}: cell_methods names {dim!r}, not a dimension of it")
    feature = ds.attrs.get("featureType")
    if feature and not any("cf_role" in v.attrs for v in ds.variables.values()):
        problems.append(f"featureType {feature!r} without an instance variable (cf_role)")
    return problems


def _method_name_ok(ds: xr.Dataset, var: xr.Variable, name: str) -> bool:
    if name in var.dims or name == "area":
        return True
    if name in ds.variables and ds.variables[name].ndim == 0:
        return True  # a scalar coordinate
    # not a variable or dimension of the file: a standard name (CF §7.3), left to the checker
    return name not in ds.variables and name not in ds.dims


def reconcile(out: xr.Dataset, source: xr.Dataset) -> xr.Dataset:
    """``out`` with every CF reference resolved against itself, using ``source``.

    Examples
    --------
    >>> import xarray as xr
    >>> src = xr.Dataset({"u": ("x", [1.0], {"grid_mapping": "crs"}), "crs": ((), 0)})
    >>> sorted(reconcile(src[["u"]], src).variables)
    ['crs', 'u']
    """
    variables = dict(out.variables)
    coord_names = set(map(str, out.coords))
    attrs = {n: dict(v.attrs) for n, v in variables.items()}
    _inherit(out, source, attrs)
    for _ in range(4):  # bounds of a restored coordinate, and so on; a few rounds suffice
        added = _restore_round(variables, attrs, source, coord_names)
        if not added:
            break
    if "featureType" in out.attrs:
        _restore_dsg(variables, attrs, source, coord_names)
    for name, var in list(variables.items()):
        if attrs[name] != dict(var.attrs):
            variables[name] = var.copy(deep=False)
            variables[name].attrs = attrs[name]
    dims = {d for v in variables.values() for d in v.dims}
    meant = set(map(str, source.dims)) | set(map(str, source.variables))
    for name, var in list(variables.items()):
        new = _check_compress_and_methods(name, var, dims, variables, meant)
        if new is not None:
            variables[name] = new
    global_attrs = dict(out.attrs)
    _feature_type_for_vectors(global_attrs, variables, coord_names)
    if "featureType" in global_attrs and not any(
        "cf_role" in v.attrs for v in variables.values()
    ):
        feature = global_attrs.pop("featureType")
        _note(global_attrs, f"featureType {feature!r} removed: its instance variable "
                     "is not in this output")
    data = {n: v for n, v in variables.items() if n not in coord_names}
    coords = {n: v for n, v in variables.items() if n in coord_names}
    result = xr.Dataset(data, coords=xr.Coordinates(coords, indexes={
        k: v for k, v in out.xindexes.items() if k in coords}), attrs=global_attrs)
    return result


def _feature_type_for_vectors(attrs: dict, variables: dict, coord_names: set) -> None:
    """Cartesian vectors are not data of a sampling geometry: set featureType aside, and back.

    A variable with a ``component`` dimension (inertial position and
    velocity on x/y/z axes) is not a time series, trajectory or profile of
    CF §9, so an output holding one keeps the input's ``featureType`` under
    ``feature_type_before_conversion`` instead; converting back restores it.
    """
    vectors = any("component" in v.dims for n, v in variables.items() if n not in coord_names)
    if vectors and "featureType" in attrs:
        attrs[_ASIDE] = attrs.pop("featureType")
        _note(attrs, f"featureType {attrs[_ASIDE]!r} set aside as {_ASIDE} while the "
              "velocities are Cartesian vectors")
    elif not vectors and _ASIDE in attrs and "featureType" not in attrs:
        attrs["featureType"] = attrs.pop(_ASIDE)


def _inherit(out: xr.Dataset, source: xr.Dataset, attrs: dict) -> None:
    """New data variables take the grid_mapping/cell_measures of input variables on their points."""
    for name in map(str, out.data_vars):
        if name in source.variables:
            continue
        own = set(out.variables[name].dims) - {"component"}
        for key in _INHERITED:
            if key in attrs[name]:
                continue
            values = {str(v.attrs[key]) for v in source.data_vars.values()
                      if key in v.attrs and set(v.dims) == own and own}
            if len(values) == 1:
                attrs[name][key] = values.pop()


def _restore_round(variables: dict, attrs: dict, source: xr.Dataset, coord_names: set) -> bool:
    added = False
    for name in list(variables):
        for key, targets in references(attrs[name]).items():
            missing = [t for t in targets if t not in variables]
            for target in missing:
                if target in source.variables:
                    _bring(target, variables, attrs, source, coord_names)
                    added = True
                else:
                    _drop_reference(attrs[name], key, target)
        compress = attrs[name].get("compress")
        if isinstance(compress, str):
            dims = {d for v in variables.values() for d in v.dims}
            for dim in compress.split():
                if dim not in dims and dim in source.variables and source[dim].dims == (dim,):
                    _bring(dim, variables, attrs, source, coord_names)
                    added = True
    return added


def _bring(name: str, variables: dict, attrs: dict, source: xr.Dataset, coord_names: set) -> None:
    variables[name] = source.variables[name]
    attrs[name] = dict(source.variables[name].attrs)
    if name in source.coords:
        coord_names.add(name)


def _restore_dsg(variables: dict, attrs: dict, source: xr.Dataset, coord_names: set) -> None:
    """Bring back ragged-array count/index variables and instance variables (CF §9)."""
    dims = {d for v in variables.values() for d in v.dims}
    ragged = [n for n, v in source.variables.items()
              if str(v.attrs.get("sample_dimension", v.attrs.get("instance_dimension", "")))
              and n not in variables]
    for name in map(str, ragged):
        var = source.variables[name]
        sample = var.attrs.get("sample_dimension")
        if (sample and sample in dims) or (not sample and set(var.dims) <= dims):
            _bring(name, variables, attrs, source, coord_names)
    dims = {d for v in variables.values() for d in v.dims}
    dims |= {str(v.attrs["instance_dimension"]) for v in variables.values()
             if "instance_dimension" in v.attrs}
    for name, var in source.variables.items():
        if "cf_role" in var.attrs and name not in variables and set(var.dims) <= dims:
            _bring(str(name), variables, attrs, source, coord_names)


def _drop_reference(attrs: dict, key: str, target: str) -> None:
    text = str(attrs.get(key, ""))
    if key in _PAIRS:
        kept = re.sub(r"\S+:\s+" + re.escape(target) + r"(\s|$)", "", text).strip()
    elif key == "grid_mapping" and ":" in text:
        kept = re.sub(re.escape(target) + r":[^:]*?(?=\S+:|$)", "", text).strip()
    else:
        kept = " ".join(t for t in text.split() if t != target)
    if kept:
        attrs[key] = kept
    else:
        attrs.pop(key, None)
    _note(attrs, f"{key} reference to {target!r} removed: no such variable in the input")


def _check_compress_and_methods(name: str, var: xr.Variable, dims: set,
                                variables: dict, meant: set) -> xr.Variable | None:
    """Drop ``compress`` naming absent dimensions, and ``cell_methods`` naming gone ones.

    A ``cell_methods`` name that was a dimension or variable of the input
    meant that dimension; if the variable no longer has it (and it is not a
    scalar coordinate), the method no longer describes the values written.
    Other names are standard names (CF §7.3) and stay.
    """
    attrs = dict(var.attrs)
    compress = attrs.get("compress")
    if isinstance(compress, str) and not set(compress.split()) <= dims:
        attrs.pop("compress")
        _note(attrs, f"compress {compress!r} removed: its dimensions are not in this output")
    methods = attrs.get("cell_methods")
    if isinstance(methods, str):
        probe = xr.Dataset({n: v for n, v in variables.items() if n != name})
        bad = [m for m in _cell_method_names(methods)
               if not (m in var.dims or m == "area"
                       or (m in probe.variables and probe.variables[m].ndim == 0)
                       or (m not in meant and m not in probe.variables and m not in dims))]
        if bad:
            attrs.pop("cell_methods")
            _note(attrs, f"cell_methods {methods!r} removed: {', '.join(bad)} not among "
                  "this variable's dimensions")
    if attrs == dict(var.attrs):
        return None
    new = var.copy(deep=False)
    new.attrs = attrs
    return new


def _note(attrs: dict, text: str) -> None:
    old = attrs.get("comment")
    attrs["comment"] = f"{old}; frameshift: {text}" if old else f"frameshift: {text}"
