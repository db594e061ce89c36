"""Reading one hardware table of an arm file."""

from ..errors import InkreachError

__all__ = []


def hardware_table(arm, name, keys):
    """The arm file's ``[name]`` table as a new dict (empty when absent), unknown keys refused.

    Parameters
    ----------
    arm : FiveBar or SerialArm
    name : str
        The table's name, e.g. ``"servo"``.
    keys : sequence of str
        The keys the table may hold.

    Returns
    -------
    dict

    Raises
    ------
    InkreachError
        If the entry is not a table or holds a key outside ``keys``.

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> hardware_table(SimpleNamespace(hardware={"servo": {"frame_hz": 50.0}}), "servo",
    ...                ("frame_hz",))
    {'frame_hz': 50.0}
    """
    table = (getattr(arm, "hardware", None) or {}).get(name) or {}
    if not isinstance(table, dict):
        raise InkreachError(f"arm file [{name}] must be a table; see the docs for its keys")
    unknown = sorted(set(table) - set(keys))
    if unknown:
        raise InkreachError(f"arm file [{name}] has unknown key {', '.join(unknown)}; "
                            f"allowed: {', '.join(keys)}")
    return dict(table)
