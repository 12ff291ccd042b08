"""A data file's bytes -> its text: the encoding declared, or the one a byte-order mark names,
and the byte order of a UTF-16 or UTF-32 file without a mark; a file that is not text, or
not text in its encoding, is named with the line where it fails."""

from __future__ import annotations

import codecs

import numpy as np

from .problems import _Rows

# Byte-order marks, longest first: the UTF-32 little-endian mark begins with the UTF-16 one.
_BOMS = (
    (b"\x00\x00\xfe\xff", "utf-32"),
    (b"\xff\xfe\x00\x00", "utf-32"),
    (b"\xef\xbb\xbf", "utf-8-sig"),
    (b"\xfe\xff", "utf-16"),
    (b"\xff\xfe", "utf-16"),
)
_WIDE = {"utf-16": 2, "utf-16-le": 2, "utf-16-be": 2, "utf-32": 4, "utf-32-le": 4, "utf-32-be": 4}
_SNIFF = 4096


def _zero_share(raw: bytes, width: int) -> np.ndarray:
    """For each byte position within a code unit of *width* bytes, the share of zero bytes
    there in the file's first 4 KiB (a text of mostly ASCII characters in UTF-16 LE has zeros
    in every second byte, in UTF-16 BE in every first)."""
    head = raw[: _SNIFF - _SNIFF % width]
    head = head[: len(head) - len(head) % width]
    if not head:
        return np.zeros(width)
    units = np.frombuffer(head, dtype=np.uint8).reshape(-1, width)
    return (units == 0).mean(axis=0)


def _byte_order(raw: bytes, width: int) -> str:
    """ "-le" or "-be" for a UTF-16 or UTF-32 file without a byte-order mark: on the side where
    the high bytes of its (mostly ASCII) characters, the zeros, fall. Python's own choice would
    be the machine's byte order; with no zeros to tell, big-endian, the order the Unicode
    Standard gives a UTF-16 text with no mark and no other agreement (section 3.10, D98; the
    same for UTF-32 from memory)."""
    share = _zero_share(raw, width)
    return "-le" if share[-1] > share[0] else "-be"


def _wide_guess(raw: bytes) -> str | None:
    """The UTF-16 or UTF-32 form a file with NUL bytes and no byte-order mark looks like, or
    None: nearly every code unit with zeros in its high bytes and none in its low byte."""
    for width, name in ((4, "utf-32"), (2, "utf-16")):
        share = _zero_share(raw, width)
        high = width - 1
        if share[0] < 0.1 and (share[1:] > 0.9).all():
            return f"{name}-le"
        if share[high] < 0.1 and (share[:high] > 0.9).all():
            return f"{name}-be"
    return None


def _family(codec: str) -> str:
    """utf-16-le -> utf-16, utf-8-sig -> utf-8: the encoding apart from byte order and mark."""
    return codec.removesuffix("-sig").removesuffix("-le").removesuffix("-be")


def _codec(raw: bytes, enc: str) -> tuple[str, str | None, str]:
    """(declared codec's name, the codec a byte-order mark names or None, the codec to read
    with) for a file starting with *raw* (its first 4 KiB are enough). A byte-order mark (UTF-8,
    UTF-16 or UTF-32) decides the encoding, whatever is declared; a UTF-16 or UTF-32 file
    without one is read in the declared form ("utf-16" or "utf-32" alone: in the byte order its
    bytes show)."""
    try:
        name = codecs.lookup(enc).name  # "UTF16", "utf_16" -> "utf-16"
    except LookupError:  # refused in the metadata already; decoding names it again
        name = enc
    bom = next((c for mark, c in _BOMS if raw.startswith(mark)), None)
    if bom is not None:
        codec = bom
    elif name in ("utf-16", "utf-32"):
        codec = name + _byte_order(raw, _WIDE[name])
    else:
        codec = name
    return name, bom, codec


def _decode(raw: bytes, enc: str, out: _Rows) -> str | None:
    """The file's text, read as :func:`_codec` says; a byte-order mark is dropped."""
    name, bom, codec = _codec(raw, enc)
    wide = codec in _WIDE
    if not wide and b"\x00" in raw[:_SNIFF]:
        guess = _wide_guess(raw)
        if guess:
            out.add(
                None,
                "",
                f"the file holds NUL bytes: it looks like {guess.upper()} text "
                f'without a byte-order mark; set [metric.csv] encoding = "{guess}"',
            )
        else:
            out.add(
                None,
                "",
                "the file looks binary, not CSV text (it contains NUL bytes); "
                "export the data as CSV",
            )
        return None
    shown = enc
    if bom is not None and _family(name) != _family(bom):
        shown = f"{_family(bom).upper()} (as its byte-order mark says)"
    try:
        text = raw.decode(codec)
    except UnicodeDecodeError as e:
        line = raw[: e.start].decode(codec, errors="replace").count("\n") + 1
        if wide:
            out.add(
                line,
                "",
                f"the bytes at offset {e.start} are not valid {shown} text "
                f"({e.reason}); save the file again as UTF-8 or UTF-16",
            )
        else:
            out.add(
                line,
                "",
                f"byte 0x{raw[e.start]:02x} is not valid {shown} text; save the "
                'file as UTF-8, or set [metric.csv] encoding = "latin-1" if it comes '
                "from an older system",
            )
        return None
    if wide and "\x00" in text[:_SNIFF]:
        out.add(
            None,
            "",
            "the file looks binary, not CSV text (it holds NUL characters); export the data as CSV",
        )
        return None
    return text
