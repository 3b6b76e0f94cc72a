"""Result objects: a dict with attribute access and a readable repr, in the
manner of scipy.optimize.OptimizeResult. Keys are the field names of the
command line's JSON output."""

import numpy as np


class Result(dict):
    """Fields by attribute (``r.status``) or by key (``r["status"]``)."""

    def __getattr__(self, name):
        try:
            return self[name]
        except KeyError as missing:
            raise AttributeError(name) from missing

    __setattr__ = dict.__setitem__
    __delattr__ = dict.__delitem__

    def __dir__(self):
        return list(self.keys())

    def __repr__(self):
        if not self:
            return "Result()"
        width = max(len(key) for key in self) + 1
        lines = []
        for key, value in self.items():
            if isinstance(value, np.ndarray) and value.ndim >= 2:
                text = np.array2string(value, threshold=36, edgeitems=2, precision=4)
                text = text.replace("\n", "\n" + " " * (width + 2))
            elif isinstance(value, np.ndarray):
                text = np.array2string(value, threshold=12, edgeitems=3, precision=6)
            elif isinstance(value, Result):
                text = "Result(" + ", ".join(sorted(value)) + ")"
            elif isinstance(value, dict):
                text = "{" + ", ".join(repr(k) + ": ..." for k in value) + "}"
            else:
                text = repr(value)
            lines.append(key.rjust(width) + ": " + text)
        return "\n".join(lines)



def as_result(fields):
    """Wraps a dict (and the dicts it holds under 'comparisons') into Results."""
    result = Result(fields)
    comparisons = result.get("comparisons")
    if isinstance(comparisons, dict):
        result["comparisons"] = {name: Result(value) for name, value in comparisons.items()}
    return result
