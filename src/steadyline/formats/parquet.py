"""A Parquet file's bytes -> the table of text cells a CSV file becomes, its rows numbered from
1 (a Parquet file has no header row). Read by pyarrow; a column of a type that cannot serve the
metric's key naming it is refused with one line before anything else is read."""

from __future__ import annotations

import io
from typing import TYPE_CHECKING

import numpy as np

from .cells import _short, column_text, repeated_names

if TYPE_CHECKING:
    import pandas as pd

# pandas and pyarrow are imported where a file is read: config imports the package for
# data_format, and the index's status needs neither (tests/test_status.py).

# What each role of a column takes, and the words for it.
_NUMBER_ROLES = {"value", "count", "size"}


def _type_fault(role: str, t) -> str | None:
    """Why a Parquet column of (pyarrow) type *t* cannot serve as the metric's *role* column,
    or None."""
    import pyarrow as pa

    if pa.types.is_dictionary(t):
        t = t.value_type
    text = (
        pa.types.is_string(t)
        or pa.types.is_large_string(t)
        or pa.types.is_string_view(t)
        or pa.types.is_null(t)
    )
    if (
        pa.types.is_nested(t)
        or pa.types.is_binary(t)
        or pa.types.is_large_binary(t)
        or pa.types.is_fixed_size_binary(t)
    ):
        return f"holds {t} values, which are not single cells; store it as text or numbers"
    if text:
        return None  # text is read and checked cell by cell, as a CSV file's
    if role == "time":
        if pa.types.is_timestamp(t) or pa.types.is_date(t):
            return None
        return f"holds {t} values, not dates or times; store it as a timestamp, a date or text"
    if role in _NUMBER_ROLES:
        if (
            pa.types.is_integer(t)
            or pa.types.is_floating(t)
            or pa.types.is_decimal(t)
            or pa.types.is_boolean(t)
        ):
            return None
        return f"holds {t} values, not numbers; store it as integers, floats or text"
    return None  # a subgroup or category: any single value names one


def read_parquet(
    raw: bytes, needed: list[str] | None, roles: dict[str, str], out
) -> tuple[pd.DataFrame, list[str]] | None:
    """(the needed columns as a table of text cells indexed by row number from 1, the file's
    column names), or None with the problem added to *out*. *roles* maps each needed column to
    the metric's key naming it (time, value, ...): a column of a type that cannot serve it is
    refused with one line before anything else is read."""
    import pandas as pd
    import pyarrow as pa
    import pyarrow.parquet as pq

    out.header_line = None
    out.records = True
    try:
        pf = pq.ParquetFile(io.BytesIO(raw))
        schema = pf.schema_arrow
    except (pa.ArrowException, OSError, ValueError) as e:
        out.add(None, "", f"the file is not a Parquet file or it is damaged ({_short(e)})")
        return None
    header = [str(n) for n in schema.names]
    repeated = repeated_names(header)
    if repeated:
        out.add(None, "header", repeated)
        return None
    if needed is None:  # every column (steadyline start): those that hold single values
        wanted = [h for h in header if _type_fault("", schema.field(h).type) is None]
    else:
        wanted = [h for h in header if h in needed]
    bad = False
    for h in wanted:
        why = _type_fault(roles.get(h, ""), schema.field(h).type)
        if why is not None:
            out.add(None, f"column '{h}'", why)
            bad = True
    if bad:
        return None
    try:
        table = pf.read(columns=wanted)
    except (pa.ArrowException, OSError, ValueError) as e:
        out.add(None, "", f"the Parquet file cannot be read ({_short(e)})")
        return None
    if table.num_rows == 0:
        out.add(None, "", "the file has no data rows")
        return None
    date_format = out.spec.csv.date_format
    cells = {}
    for h in wanted:
        col = table.column(h)
        if pa.types.is_dictionary(col.type):
            col = col.cast(col.type.value_type)
        fmt = date_format if roles.get(h) == "time" else None
        cells[h] = column_text(col.to_pylist(), fmt)
    df = pd.DataFrame(cells, columns=wanted, dtype=str)
    df.index = np.arange(1, table.num_rows + 1)
    return df, header
