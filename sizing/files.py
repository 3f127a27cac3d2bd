"""Files in and out: the path policy for files a case names, bounded reads, safe writes.

Reading (files from outside are hostile):

* :func:`inside` resolves a path a case names against the case file's folder (symlinks
  resolved) and refuses anything that lands outside it;
* :func:`read_regular` reads a regular file only (never a folder, FIFO or device: checked on the
  open file descriptor, opened without blocking) and at most ``max_bytes`` of what is actually read.

Writing (a failed run never leaves a half-written file over a good one):

* :func:`write_atomic` writes beside the target, ``fsync``, rename.  A symlink is followed: its
  target is replaced and the link kept.  A folder, a device, a FIFO or a socket at the target is
  refused.  A replaced file keeps its permission bits; a new file gets the usual mode for the
  user's umask (0644 under umask 022), not 0600.
* :func:`write_folder` writes a set of files (the plan's three) into a new folder that takes the
  place of the old one in one rename, so a reader sees the old set or the new set, never a mix.
"""

from __future__ import annotations

import ctypes
import ctypes.util
import errno
import os
import secrets
import shutil
import stat
from pathlib import Path

from .errors import InputError

MAX_TOKEN = 20  # characters of an outside value quoted in a message


def token(text: object, limit: int = MAX_TOKEN) -> str:
    """Return ``repr`` of a short, printable excerpt of ``text`` (at most ``limit`` characters).

    >>> token("abc")
    "'abc'"
    >>> token("x" * 30)
    "'xxxxxxxxxxxxxxxxx...'"
    >>> token("a\\x1b[31mb")
    "'a?[31mb'"
    """
    s = "".join(c if c.isprintable() else "?" for c in str(text))
    if len(s) > limit:
        s = s[: max(limit - 3, 1)] + "..."
    return repr(s)


# ---------------------------------------------------------------------------------------------
# reading


def inside(value: object, base: Path | str | None, field: str) -> Path:
    """Resolve ``value`` (a path a case names) inside the folder ``base``; refuse it otherwise.

    ``base`` is the case file's folder (the working folder when the case has none).  Relative
    paths are taken from ``base``; symlinks are resolved before the check, so a link pointing out
    of the folder is refused like ``../`` or an absolute path elsewhere.

    Raises
    ------
    InputError
        Naming ``field``, the value given and what is allowed.
    """
    text = str(value) if value is not None else ""
    if not text.strip():
        raise InputError(f"{field}: empty path; expected a file name relative to the case file's "
                         "folder, e.g. 'data/file.csv'")
    if "\x00" in text:
        raise InputError(f"{field}: {token(text)} is not a file name")
    root = Path(base).resolve() if base is not None else Path.cwd().resolve()
    p = Path(text)
    candidate = p if p.is_absolute() else root / p
    resolved = candidate.resolve()
    if not resolved.is_relative_to(root):
        raise InputError(f"{field}: {token(text, 80)} points outside the case file's folder {root}; "
                         "expected a file inside that folder (or a subfolder), named relative to it, "
                         "e.g. 'data/file.csv'")
    return resolved


def read_regular(path: Path | str, field: str, max_bytes: int) -> bytes:
    """Return the bytes of a regular file of at most ``max_bytes``; refuse anything else.

    The file is opened without blocking (a FIFO never hangs), its type checked on the open
    descriptor, and at most ``max_bytes + 1`` bytes read (a file that grows or lies about its size
    is still capped).

    Raises
    ------
    InputError
        Missing file, a folder, a device/FIFO/socket, unreadable, or larger than ``max_bytes``.
    """
    p = Path(path)
    mb = max_bytes / 2**20
    limit = f"at most {mb:.3g} MB is accepted"
    it = "the file" if field == str(p) else str(p)  # the field is the path itself: say it once
    try:
        st = os.stat(p)
    except FileNotFoundError:
        raise InputError(f"{field}: file not found" + ("" if field == str(p) else f": {p}")) from None
    except OSError as exc:
        raise InputError(f"{field}: cannot read {it} ({exc.strerror})") from None
    if stat.S_ISDIR(st.st_mode):
        raise InputError(f"{field}: {it} is a folder; expected a file")
    if not stat.S_ISREG(st.st_mode):
        raise InputError(f"{field}: {it} is not a regular file (a device, FIFO or socket); expected a file")
    if st.st_size > max_bytes:
        raise InputError(f"{field}: {it} is {st.st_size / 2**20:.3g} MB; {limit}")
    try:
        fd = os.open(p, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOCTTY", 0))
    except OSError as exc:
        raise InputError(f"{field}: cannot read {it} ({exc.strerror})") from None
    try:
        if not stat.S_ISREG(os.fstat(fd).st_mode):  # swapped between stat and open
            raise InputError(f"{field}: {it} is not a regular file; expected a file")
        chunks, total = [], 0
        while total <= max_bytes:
            chunk = os.read(fd, min(1 << 20, max_bytes + 1 - total))
            if not chunk:
                break
            chunks.append(chunk)
            total += len(chunk)
    except OSError as exc:
        raise InputError(f"{field}: cannot read {it} ({exc.strerror})") from None
    finally:
        os.close(fd)
    if total > max_bytes:
        raise InputError(f"{field}: {it} is larger than {mb:.3g} MB; {limit}")
    return b"".join(chunks)


# ---------------------------------------------------------------------------------------------
# writing


def _target(path: Path | str) -> tuple[Path, os.stat_result | None]:
    """Return the file really written (a symlink followed) and its stat (None if new)."""
    p = Path(path)
    real = Path(os.path.realpath(p))
    try:
        st = os.stat(real)
    except FileNotFoundError:
        return real, None
    if stat.S_ISDIR(st.st_mode):
        raise InputError(f"{p}: is a folder; expected a file name to write")
    if not stat.S_ISREG(st.st_mode):
        raise InputError(f"{p}: is not a regular file (a device, FIFO or socket); refusing to replace it")
    return real, st


def _fsync_dir(folder: Path) -> None:
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:  # pragma: no cover (platforms without directory descriptors)
        return
    try:
        os.fsync(fd)
    except OSError:  # pragma: no cover
        pass
    finally:
        os.close(fd)


def _write_new(path: Path, data, mode: int | None) -> None:
    """Create ``path`` (must not exist), write ``data`` (bytes or an iterable of byte chunks), fsync.

    The mode comes from the umask unless given.
    """
    fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_NOFOLLOW", 0), 0o666)
    try:
        if mode is not None:
            os.fchmod(fd, mode)
        for chunk in ((data,) if isinstance(data, (bytes, bytearray, memoryview)) else data):
            view = memoryview(chunk)
            while view:
                n = os.write(fd, view)
                view = view[n:]
        os.fsync(fd)
    finally:
        os.close(fd)


def _tmp_name(folder: Path, name: str) -> Path:
    return folder / f".{name}.{secrets.token_hex(6)}.tmp"


def write_atomic(path: Path | str, data) -> None:
    """Write ``data`` (text as UTF-8, bytes, or an iterable of byte chunks written as they come,
    so a large file need not be held in memory) through a temporary file, ``fsync`` and a rename.

    A symlink at ``path`` is followed (its target is replaced, the link stays); a folder, device,
    FIFO or socket is refused with :class:`InputError`.  A replaced file keeps its permission
    bits; a new one gets 0666 less the umask.  On any error the temporary file is removed and the
    previous file stays as it was.
    """
    raw = data.encode("utf-8") if isinstance(data, str) else data
    real, st = _target(path)
    real.parent.mkdir(parents=True, exist_ok=True)
    tmp = _tmp_name(real.parent, real.name)
    try:
        _write_new(tmp, raw, stat.S_IMODE(st.st_mode) if st is not None else None)
        _target(path)  # still a regular file (or nothing) just before the rename
        os.replace(tmp, real)
    except BaseException:
        if os.path.lexists(tmp):
            os.unlink(tmp)
        raise
    _fsync_dir(real.parent)


_AT_FDCWD = -100
_RENAME_EXCHANGE = 2


def _exchange(a: Path, b: Path) -> bool:
    """Swap two paths in one atomic rename (Linux ``renameat2``); False where not available."""
    name = ctypes.util.find_library("c")
    try:
        libc = ctypes.CDLL(name, use_errno=True)
        fn = libc.renameat2
    except (OSError, AttributeError, TypeError):
        return False
    fn.argtypes = [ctypes.c_int, ctypes.c_char_p, ctypes.c_int, ctypes.c_char_p, ctypes.c_uint]
    fn.restype = ctypes.c_int
    if fn(_AT_FDCWD, os.fsencode(a), _AT_FDCWD, os.fsencode(b), _RENAME_EXCHANGE) == 0:
        return True
    err = ctypes.get_errno()
    if err in (errno.ENOSYS, errno.EINVAL, errno.ENOTSUP, errno.EOPNOTSUPP):
        return False
    raise OSError(err, os.strerror(err), str(b))


def _write_each(real: Path, given: Path, files: dict[str, str | bytes]) -> list[Path]:
    """Replace each file atomically on its own (all targets checked first)."""
    for n in files:
        _target(real / n)
    for n, t in files.items():
        write_atomic(real / n, t)
    return [given / n for n in files]


def write_folder(folder: Path | str, files: dict[str, str | bytes]) -> list[Path]:
    """Write ``{file name: text}`` as the whole content of ``folder``, in one step where it can.

    * ``folder`` missing: a new folder beside it is filled and renamed into place;
    * ``folder`` holding only files of this set (an earlier run): the new folder is swapped with
      it in one atomic exchange (Linux), or, where that is not available, the old folder is moved
      aside, the new one moved in and the old one removed;
    * ``folder`` holding anything else (the user's own files), or being the working folder or
      one above it, or a mount point: each file is replaced atomically on its own, and nothing
      else in the folder is touched (a kill between two files can then mix old and new).

    A symlinked folder is followed.  No temporary folder is left behind by an error.

    Raises
    ------
    InputError
        ``folder`` is an existing file or a device; a target file is not a regular file.
    OSError
        The folder cannot be created or written (read-only, disk full, ...).
    """
    given = Path(folder)
    names = list(files)
    for n in names:
        if not n or Path(n).name != n or n in (".", ".."):
            raise ValueError(f"write_folder: {n!r} is not a plain file name")  # programming error
    real = Path(os.path.realpath(given))
    try:
        st = os.stat(real)
    except FileNotFoundError:
        st = None
    if st is not None and not stat.S_ISDIR(st.st_mode):
        raise InputError(f"{given}: exists and is not a folder; expected a folder for the output files")
    mine = st is not None and all(
        e.name in files and e.is_file(follow_symlinks=False) for e in os.scandir(real))
    cwd = Path.cwd().resolve()
    if st is not None and (not mine or cwd.is_relative_to(real)):  # never swap the working folder
        return _write_each(real, given, files)
    real.parent.mkdir(parents=True, exist_ok=True)
    tmp = _tmp_name(real.parent, real.name)
    os.mkdir(tmp, 0o777)  # the umask applies, like any new folder
    try:
        if st is not None:
            os.chmod(tmp, stat.S_IMODE(st.st_mode))
        for n in names:
            old = real / n
            mode = stat.S_IMODE(os.stat(old).st_mode) if st is not None and old.is_file() else None
            t = files[n]
            _write_new(tmp / n, t.encode("utf-8") if isinstance(t, str) else t, mode)
        _fsync_dir(tmp)
        if st is None:
            os.rename(tmp, real)
        else:
            try:
                swapped = _exchange(tmp, real)
            except OSError as exc:
                if exc.errno not in (errno.EBUSY, errno.EXDEV, errno.EPERM):
                    raise
                return _write_each(real, given, files)  # a mount point or the like: file by file
            if swapped:
                shutil.rmtree(tmp)  # now the old set
            else:  # pragma: no cover (non-Linux): a short moment with no folder, never a mix
                aside = _tmp_name(real.parent, real.name + ".old")
                os.rename(real, aside)
                os.rename(tmp, real)
                shutil.rmtree(aside, ignore_errors=True)
        _fsync_dir(real.parent)
    finally:
        if os.path.lexists(tmp):
            shutil.rmtree(tmp, ignore_errors=True)
    return [given / n for n in names]
