"""Text-level checks before the grammar: size, encoding, control characters, nesting.

These are problems lark should not have to meet (a binary file, a megabyte
line, parentheses nested a thousand deep); each is refused with its place.
"""

from __future__ import annotations

from lumped.errors import Location, NetlistError
from lumped.language.grammar import MAX_BYTES, MAX_LINE, MAX_NESTING


def prepare_text(data: bytes | str, source: str) -> str:
    """Decode and check netlist text; return it with plain newlines, ending in one.

    Bytes are decoded as UTF-8 (a byte-order mark is skipped).  Text too large,
    not UTF-8, with control characters, overlong lines or parentheses nested too
    deep is refused with a :class:`~lumped.errors.NetlistError` pointing at it.

    Examples
    --------
    >>> prepare_text(b"resistor R from a to ground 1 ohm\\r\\n", "f.lumped")
    'resistor R from a to ground 1 ohm\\n'
    >>> try:
    ...     prepare_text("let a = 1\\x07", "f.lumped")
    ... except NetlistError as error:
    ...     print(error.location.describe(), error.message)
    f.lumped:1:10 control character '\\x07' in the text
    """
    if isinstance(data, bytes):
        if len(data) > MAX_BYTES:
            raise NetlistError(
                f"the file is too large ({len(data)} bytes; the limit is {MAX_BYTES})",
                Location(source, 1, 1),
                hint="split the network or check that this is the right file",
                line_text=data[:200].split(b"\n")[0].decode("utf-8", "replace"),
            )
        if data.startswith(b"\xef\xbb\xbf"):
            data = data[3:]
        try:
            text = data.decode("utf-8")
        except UnicodeDecodeError as exc:
            line = data[: exc.start].count(b"\n") + 1
            line_start = data.rfind(b"\n", 0, exc.start) + 1
            line_end = data.find(b"\n", exc.start)
            # Columns count characters; everything before the bad byte decodes.
            column = len(data[line_start : exc.start].decode("utf-8")) + 1
            raise NetlistError(
                f"this is not UTF-8 text (byte 0x{data[exc.start]:02x})",
                Location(source, line, column),
                hint="a netlist is a plain text file; save it as UTF-8",
                line_text=data[line_start : line_end if line_end >= 0 else len(data)].decode(
                    "utf-8", "replace"),
            ) from None
    else:
        text = data.lstrip("\ufeff")
        if len(text) > MAX_BYTES:
            raise NetlistError(
                f"the text is too large ({len(text)} characters; the limit is {MAX_BYTES})",
                Location(source, 1, 1),
                hint="split the network",
                line_text=text[:200].split("\n")[0],
            )
    text = text.replace("\r\n", "\n").replace("\r", "\n")
    depth = 0
    for number, line in enumerate(text.split("\n"), start=1):
        if len(line) > MAX_LINE:
            raise NetlistError(
                f"line {number} is {len(line)} characters long (the limit is {MAX_LINE})",
                Location(source, number, MAX_LINE),
                hint="write one statement per line and name long expressions with let",
                line_text=line[:200],
            )
        for column, char in enumerate(line, start=1):
            if char == "\x00" or (ord(char) < 32 and char not in "\t\f"):
                raise NetlistError(
                    f"control character {char!r} in the text",
                    Location(source, number, column),
                    hint="a netlist is a plain text file; is this the right file?",
                    line_text=line,
                )
            if char == "#":
                break
            if char == "(":
                depth += 1
                if depth > MAX_NESTING:
                    raise NetlistError(
                        f"parentheses nested more than {MAX_NESTING} deep",
                        Location(source, number, column),
                        hint="name parts of the expression with let",
                        line_text=line,
                    )
            elif char == ")":
                depth = max(0, depth - 1)
        depth = 0
    if not text.endswith("\n"):
        text += "\n"
    return text
