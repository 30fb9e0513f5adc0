"""Reading a user's text file (a case file, a CSV table) whole, with every failure a one-line ``InputError``."""

from __future__ import annotations

from pathlib import Path

from edl_solver.errors import InputError

__all__ = ["read_text"]


def read_text(path: str | Path, what: str, where: str = "", bom: bool = True) -> str:
    """The file's text, decoded as UTF-8 (a byte-order mark dropped when ``bom``).

    Parameters
    ----------
    path : str or Path
    what : str
        What the file is, in the messages ("case file", "drive table file").
    where : str
        The input that names the file ("channel.size.csv"), put before the path in the messages.

    Raises
    ------
    InputError
        "<where>: <path>: <what> not found", "... is a directory, expected a <what>", "... not UTF-8 text (byte k),
        expected a <what>" or "... cannot read the <what> (reason)".
    """
    label = f"{where}: {path}" if where else str(path)
    try:
        return Path(path).read_bytes().decode("utf-8-sig" if bom else "utf-8")
    except FileNotFoundError:
        raise InputError(f"{label}: {what} not found") from None
    except IsADirectoryError:
        raise InputError(f"{label}: is a directory, expected a {what}") from None
    except UnicodeDecodeError as exc:
        raise InputError(f"{label}: not UTF-8 text (byte {exc.start}), expected a {what}") from None
    except OSError as exc:
        raise InputError(f"{label}: cannot read the {what} ({exc.strerror or exc})") from None
