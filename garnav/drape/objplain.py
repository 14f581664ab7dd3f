"""The quick path of the OBJ reader: plain triangle files as garnav and most tools write them.

:func:`parse_plain_obj` reads an OBJ text whose every ``v`` line has three coordinates, every
``vt`` line two, and every ``f`` line three ``v/vt`` corners with positive indices (the form of
:func:`garnav.drape.meshio.dumps_obj` and of the demo drapes), with list operations over whole
blocks of lines instead of one Python step per line and corner. For anything else — comments at
line ends, polygons, relative (negative) indices, corners without ``vt``, leading blanks, other
line breaks, a malformed number — it returns None, and the caller's line-by-line reader
(:func:`garnav.drape.meshio.parse_obj`) reads the text and gives its error messages. On the texts
it accepts the two give the same arrays, bit for bit: numbers are converted by the same
``float`` and ``int`` (tests/test_drape_meshio.py compares them).
"""

from __future__ import annotations

import numpy as np

__all__ = ["parse_plain_obj"]

#: Line breaks of ``str.splitlines`` other than "\n": with any of them the quick path does not apply.
OTHER_BREAKS = ("\r", "\x0b", "\x0c", "\x1c", "\x1d", "\x1e", "\x85", "\u2028", "\u2029")
#: Deletes the ASCII digits (what is left of a plain face line is its separators).
NO_DIGITS = str.maketrans("", "", "0123456789")


def _block(lines: list[str], head: str, width: int) -> list[str] | None:
    """The tokens after ``head`` of the lines starting with ``head + ' '``, when each of them has
    exactly ``width`` of them; else None."""
    start = head + " "
    k = len(start)
    chosen = [line for line in lines if line[:k] == start]
    tokens = " ".join(chosen).split()
    if len(tokens) != (width + 1) * len(chosen) or tokens[:: width + 1].count(head) != len(chosen):
        return None  # the head can only be a line's first token (it is not a number): so each line has width tokens
    del tokens[:: width + 1]
    return tokens


def _face_indices(lines: list[str]) -> np.ndarray | None:
    """(F, 3, 2) one-based ``v/vt`` indices of the ``f`` lines when every one of them is exactly
    ``f A/B C/D E/F`` with ASCII digits; else None.

    With that checked on the whole block at once (digits deleted, only the separators must be
    left, and no number is empty), every token is a plain decimal integer, which numpy's text
    reader converts exactly as ``int`` does.
    """
    body = "\n".join([line[2:] for line in lines if line[:2] == "f "])
    n = body.count("\n") + 1 if body else 0
    if n == 0 or body.translate(NO_DIGITS) != "\n".join(["/ / /"] * n):
        return None
    if body[0] == "/" or body[-1] == "/" or any(pair in body for pair in ("/ ", " /", "\n/", "/\n")):
        return None  # an empty index
    index = np.fromstring(body.replace("/", " ").replace("\n", " "), dtype=np.int64, sep=" ")
    return index.reshape(n, 3, 2) if len(index) == 6 * n else None


def parse_plain_obj(text: str) -> tuple[np.ndarray, np.ndarray, np.ndarray] | None:
    """Positions (N, 3), faces (F, 3) and per-corner UVs (F, 3, 2) of a plain OBJ text (see the
    module text), or None when the text is not of that form.

    An index out of range gives None too (the line reader refuses the text with its message).
    """
    if any(b in text for b in OTHER_BREAKS):
        return None
    lines = text.split("\n")
    if any(first.isspace() for first in {line[:1] for line in lines}):
        return None  # a line with leading blanks: the line reader strips them
    odd = [line for line in lines if line[:1] in ("v", "f") and line[:2] not in ("v ", "f ") and line[:3] != "vt "]
    if any(line.split("#", 1)[0].strip().partition(" ")[0] in ("v", "vt", "f") for line in odd):
        return None  # e.g. a bare "v": an error for the line reader to report
    v = _block(lines, "v", 3)
    vt = _block(lines, "vt", 2)
    index = _face_indices(lines)
    if v is None or not vt or index is None:
        return None
    try:
        positions = np.array(list(map(float, v)), dtype=float).reshape(-1, 3)
        uvs = np.array(list(map(float, vt)), dtype=float).reshape(-1, 2)
    except ValueError:  # a token that is no number: the line reader says where
        return None
    if index.min() <= 0:
        return None  # relative or zero indices: the line reader resolves or refuses them
    faces = index[:, :, 0] - 1
    tidx = index[:, :, 1] - 1
    if faces.max() >= len(positions) or tidx.max() >= len(uvs):
        return None
    return positions, faces, uvs[tidx]
