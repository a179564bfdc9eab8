"""Modbus register formats: a value's type and its byte order on the wire.

A format is a type (``int16``, ``uint16``, ``int32``, ``uint32``, ``float32``, ``float64``) with
the byte order as a suffix in the common ABCD notation: A is the value's most significant byte,
``-abcd`` (the default, may be left out) is the order of the Modbus specification (big-endian
words, most significant word first), ``-cdab`` swaps the words, ``-badc`` the bytes inside each
word, ``-dcba`` is little-endian. ``float32-swapped`` is the older name of ``float32-cdab``.
"""

from __future__ import annotations

import struct
from collections.abc import Sequence

from benchwarden.errors import InputError
from benchwarden.storage.profile_fields import BYTE_ORDERS, FORMAT_ALIASES, FORMAT_NAMES, TYPES

__all__ = ["FORMATS", "canonical", "register_count", "decode", "encode"]

#: Every format name and how many 16-bit registers it takes.
FORMATS: dict[str, int] = {}
for _name in FORMAT_NAMES:
    _t = FORMAT_ALIASES.get(_name, _name).split("-")[0]
    FORMATS[_name] = TYPES[_t]

_CODES = {"int16": "h", "uint16": "H", "int32": "i", "uint32": "I", "float32": "f", "float64": "d"}


def canonical(fmt: str) -> tuple[str, str]:
    """The type and the byte order of a format name.

    >>> canonical("float32"), canonical("float32-swapped"), canonical("int32-dcba")
    (('float32', 'abcd'), ('float32', 'cdab'), ('int32', 'dcba'))
    """
    if fmt not in FORMATS:
        raise InputError(f"register format {fmt!r} is not one of {', '.join(TYPES)} with an optional byte order "
                         f"suffix {', '.join('-' + o for o in BYTE_ORDERS)}")
    name = FORMAT_ALIASES.get(fmt, fmt)
    typ, _, order = name.partition("-")
    return typ, order or "abcd"


def register_count(fmt: str) -> int:
    return FORMATS[canonical(fmt)[0]]


def _reorder(words: list[int], order: str) -> list[int]:
    """Wire words to ABCD words, or back (the reordering is its own inverse)."""
    if order in ("cdab", "dcba"):
        words = words[::-1]
    if order in ("badc", "dcba"):
        words = [((w & 0xFF) << 8) | (w >> 8) for w in words]
    return words


def decode(registers: Sequence[int], fmt: str) -> float:
    """The value in Modbus registers (16-bit words as received) in format ``fmt``.

    >>> decode([0x4316, 0x0000], "float32"), decode([0x0000, 0x4316], "float32-swapped")   # IEEE 754: 150.0
    (150.0, 150.0)
    >>> decode([0xFFFF], "int16"), decode([0xFFFF], "uint16"), decode([0x0001, 0x0000], "uint32")
    (-1.0, 65535.0, 65536.0)
    """
    typ, order = canonical(fmt)
    n = TYPES[typ]
    if len(registers) != n or any(not 0 <= int(r) <= 0xFFFF for r in registers):
        raise InputError(f"{fmt} needs {n} register(s) of 16 bits, got {list(registers)!r}")
    words = _reorder([int(r) for r in registers], order)
    raw = b"".join(w.to_bytes(2, "big") for w in words)
    return float(struct.unpack(">" + _CODES[typ], raw)[0])


def encode(value: float, fmt: str) -> list[int]:
    """The registers that carry ``value`` in format ``fmt`` (for the simulator)."""
    typ, order = canonical(fmt)
    raw = struct.pack(">" + _CODES[typ], int(value) if typ.startswith(("int", "uint")) else value)
    return _reorder([int.from_bytes(raw[i:i + 2], "big") for i in range(0, len(raw), 2)], order)
