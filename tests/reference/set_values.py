"""`--set` values as hurdle reads them, shared by the reference checks (README, Commands, `--set`).

A value is read as TOML (a number, true, a date, a quoted string, a list); anything else is
taken as text. A key is a dotted path, spaces around the key, each segment and the value
ignored.
"""
import tomllib


def toml_value(text):
    """The value of one `--set` assignment, as hurdle reads it."""
    text = text.strip()
    try:
        return tomllib.loads(f"value = {text}")["value"]
    except tomllib.TOMLDecodeError:
        return text


def set_path(table, segments, text):
    """Sets the value `text` at the dotted path `segments` inside `table`, creating tables on
    the way as hurdle does."""
    *parents, last = [s.strip() for s in segments]
    for p in parents:
        table = table.setdefault(p, {})
    table[last] = toml_value(text)
