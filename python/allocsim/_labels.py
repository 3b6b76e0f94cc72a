"""Labelled inputs: pandas DataFrames and Series are aligned by their labels
(the allocation's, or the gains' order when there is no allocation) and
turned into arrays; the labels go back into the result."""


def _is_frame(value):
    return hasattr(value, "index") and hasattr(value, "columns") and hasattr(value, "to_numpy")


def _is_series(value):
    return hasattr(value, "index") and not hasattr(value, "columns") and hasattr(value, "to_numpy")


def _same_labels(kind, name, reference_name, labels, reference):
    if list(labels) == list(reference):
        return None
    missing = [label for label in reference if label not in set(labels)]
    extra = [label for label in labels if label not in set(reference)]
    if missing or extra or len(labels) != len(reference):
        said = []
        if missing:
            said.append("lacks " + ", ".join(map(str, missing[:5])))
        if extra:
            said.append("has " + ", ".join(map(str, extra[:5])) + " not in " + reference_name)
        if not said:
            said.append("repeats labels")
        raise ValueError(f"{name}: {kind} labels differ from {reference_name}'s: " + "; ".join(said))
    return list(reference)


def align(arguments, matrices, row_vectors=(), column_vectors=()):
    """Replaces the labelled arguments by arrays in the order of the first
    labelled matrix; returns (agent_labels, partner_labels) or (None, None)."""
    reference_name = next((n for n in matrices if _is_frame(arguments.get(n))), None)
    if reference_name is None:
        for name in list(row_vectors) + list(column_vectors):
            if _is_series(arguments.get(name)):
                arguments[name] = arguments[name].to_numpy()
        return None, None
    reference = arguments[reference_name]
    rows, columns = list(reference.index), list(reference.columns)
    for name in matrices:
        value = arguments.get(name)
        if not _is_frame(value):
            continue
        order = _same_labels("row", name, reference_name, list(value.index), rows)
        if order is not None:
            value = value.loc[order]
        order = _same_labels("column", name, reference_name, list(value.columns), columns)
        if order is not None:
            value = value[order]
        arguments[name] = value.to_numpy()
    for names, labels, kind in ((row_vectors, rows, "row"), (column_vectors, columns, "column")):
        for name in names:
            value = arguments.get(name)
            if _is_series(value):
                order = _same_labels(kind, name, reference_name, list(value.index), labels)
                arguments[name] = (value.loc[order] if order is not None else value).to_numpy()
    return [str(label) for label in rows], [str(label) for label in columns]
