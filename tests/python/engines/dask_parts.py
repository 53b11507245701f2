"""What the Dask workers run (importable by the worker processes): a summary per partition and the
merge of two summaries. Summaries travel between processes in their byte form (pickling)."""

import lode


def summarise(frame, items):
    return lode.Summary(items=items).add(frame[items].to_numpy(dtype=float))


def merge(a, b):
    return a.merge(b)


def tree_merge(parts):
    """A tree reduction of delayed summaries: neighbours merged level by level."""
    import dask
    level = list(parts)
    while len(level) > 1:
        level = [dask.delayed(merge)(level[k], level[k + 1]) if k + 1 < len(level) else level[k]
                 for k in range(0, len(level), 2)]
    return level[0]
