#!/usr/bin/env python3
"""Writes the Parquet fixture of tests/universe.rs with a tool other than hurdle (polars for
Python; hurdle's own polars build cannot write these types).

attributes-types.parquet: attributes of the test universe's twelve securities (S01 to S12, the
figures of tests/universe_data `figures(i)`: equity 500 + 250 i, debt 40 + 35 i, cash 10 + 5 i,
tax rate 0.2 + 0.01 i), with the market value of equity stored twice, as a decimal
(`market_cap`, precision 20, scale 4, as database exports store amounts) and as a double
(`market_cap_float`); the tax rate as a double (`tax_rate`) and as an 8-bit integer percent
(`tax_percent`); an unused decimal column (`revenue`); a column of nothing but empty cells
typed as null (`cash_blank`), as a writer types a column it saw no value in; and the market
value of equity plus 0.1 as a 32-bit float (`market_cap_f32`), whose exact values (500.1 is
500.100006103515625) are not the decimals written. Invented figures, not market data.
The fixture is committed; rerun this script only to change it (needs `pip install polars`).
"""

import os
from decimal import Decimal

import polars as pl

HERE = os.path.dirname(os.path.abspath(__file__))

rows = range(12)
frame = pl.DataFrame(
    {
        "security": [f"S{i + 1:02d}" for i in rows],
        "industry": [f"Industry {'ABCD'[i // 3]}" for i in rows],
        "market_cap": pl.Series(
            [Decimal(500 + 250 * i) for i in rows], dtype=pl.Decimal(20, 4)
        ),
        "market_cap_float": [500.0 + 250.0 * i for i in rows],
        "debt": [40.0 + 35.0 * i for i in rows],
        "cash": [10.0 + 5.0 * i for i in rows],
        "tax_rate": [0.2 + 0.01 * i for i in rows],
        "tax_percent": pl.Series([20 + i for i in rows], dtype=pl.UInt8),
        "revenue": pl.Series([Decimal(1000 + i) for i in rows], dtype=pl.Decimal(20, 2)),
        "cash_blank": pl.Series([None for i in rows], dtype=pl.Null),
        "market_cap_f32": pl.Series([500.1 + 250 * i for i in rows], dtype=pl.Float32),
    }
)
frame.write_parquet(os.path.join(HERE, "attributes-types.parquet"))
print(frame.schema)
