"""Turns a scenario dict into scenario TOML text, so that dicts and files go through one reader
and give the same messages. Keys nest as in the file: {"coil": {"inductance": "550 mH"}}; a list
of dicts is an array of tables ({"extra_part": [{"name": ..., "between": ["switch", "x"]}]})."""
import math


def _scalar(v, where):
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, (int, float)):
        if isinstance(v, float) and not math.isfinite(v):
            return '"%s"' % v  # the reader says it is not a finite number, naming the key
        if isinstance(v, int) and not -2 ** 63 <= v < 2 ** 63:
            # Beyond TOML's 64-bit integers: as a number, so that the reader's range check names the key.
            return repr(float(v)) if abs(v) < 1e308 else '"inf"'
        return repr(float(v)) if isinstance(v, float) else str(v)
    if isinstance(v, str):
        return '"' + v.replace("\\", "\\\\").replace('"', '\\"') + '"'
    raise TypeError("scenario key %s: a value must be a number, a string, a boolean or a list of them, not %s"
                    % (where, type(v).__name__))


def _value(v, where):
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(_scalar(x, where) for x in v) + "]"
    return _scalar(v, where)


def _is_table_list(v):
    return isinstance(v, list) and len(v) > 0 and all(isinstance(x, dict) for x in v)


def to_toml(d, _prefix=""):
    """TOML text for a nested dict of scenario sections and keys."""
    if not isinstance(d, dict):
        raise TypeError("a scenario must be a dict of sections, got %s" % type(d).__name__)
    lines, tables, arrays = [], [], []
    for k, v in d.items():
        if not isinstance(k, str):
            raise TypeError("scenario keys must be strings, got %r" % (k,))
        if isinstance(v, dict):
            tables.append((k, v))
        elif _is_table_list(v):
            arrays.append((k, v))
        else:
            lines.append("%s = %s" % (k, _value(v, _prefix + k)))
    for k, v in tables:
        name = _prefix + k
        lines.append("[%s]" % name)
        lines.append(to_toml(v, name + "."))
    for k, items in arrays:
        name = _prefix + k
        for item in items:
            lines.append("[[%s]]" % name)
            lines.append(to_toml(item, name + "."))
    return "\n".join(line for line in lines if line != "") + "\n"
