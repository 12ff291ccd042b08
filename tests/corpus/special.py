"""Files that are not plain readable files, made for real in a test portfolio: named pipes,
sockets, devices, dangling links, loops of links, folders with a file's name, unreadable files,
links to outside the projects folder; and a way to run a command as a user who cannot read an
unreadable file.

An unreadable file: the tests run as root, and root reads a file of mode 000 all the same (the
kernel lets a process with the capability CAP_DAC_OVERRIDE, or CAP_DAC_READ_SEARCH, past the
permission bits). :func:`permissions_bind` lowers those two capabilities from the effective set
of the calling thread only, for the duration of the block: the kernel then refuses the open
exactly as it refuses an ordinary user (EACCES), no call of ours is replaced. Threads started
inside the block inherit the lowered set; a program started from it regains its capabilities
(they are recomputed at exec for root), which the in-process commands never do. Not root: the
permission bits already bind, and nothing is changed.
"""

from __future__ import annotations

import contextlib
import ctypes
import os
import socket
import stat
from pathlib import Path

import pytest

_CAP_VERSION_3 = 0x20080522  # linux/capability.h: _LINUX_CAPABILITY_VERSION_3
_CAP_DAC_OVERRIDE = 1  # linux/capability.h
_CAP_DAC_READ_SEARCH = 2


class _Header(ctypes.Structure):
    _fields_ = [("version", ctypes.c_uint32), ("pid", ctypes.c_int)]


class _Data(ctypes.Structure):
    _fields_ = [
        ("effective", ctypes.c_uint32),
        ("permitted", ctypes.c_uint32),
        ("inheritable", ctypes.c_uint32),
    ]


@contextlib.contextmanager
def permissions_bind():
    """Within the block, file permission bits bind this thread as they bind any user (see the
    module's docstring); skips the test where that cannot be arranged."""
    if os.geteuid() != 0:
        yield
        return
    libc = ctypes.CDLL(None, use_errno=True)
    header = _Header(_CAP_VERSION_3, 0)  # pid 0: the calling thread
    data = (_Data * 2)()
    if libc.capget(ctypes.byref(header), data) != 0:
        pytest.skip(f"capget failed: {os.strerror(ctypes.get_errno())}")
    saved = data[0].effective
    data[0].effective = saved & ~((1 << _CAP_DAC_OVERRIDE) | (1 << _CAP_DAC_READ_SEARCH))
    if libc.capset(ctypes.byref(header), data) != 0:
        pytest.skip(f"capset failed: {os.strerror(ctypes.get_errno())}")
    try:
        _assert_bound()
        yield
    finally:
        data[0].effective = saved
        if libc.capset(ctypes.byref(header), data) != 0:
            raise OSError(ctypes.get_errno(), "could not restore the capabilities")


def _assert_bound() -> None:
    """A file of mode 000 cannot be opened now (else the test would prove nothing)."""
    import tempfile

    fd, name = tempfile.mkstemp(prefix="steadyline-unreadable-")
    os.close(fd)
    try:
        os.chmod(name, 0)
        try:
            open(name, "rb").close()
        except PermissionError:
            return
        pytest.skip("permission bits do not bind here; an unreadable file cannot be made")
    finally:
        os.unlink(name)


def unreadable(rel: str):
    """A set-up: the portfolio's file *rel* gets mode 000 (no one but root may read it)."""

    def setup(root: Path) -> None:
        os.chmod(root / rel, 0)

    setup.unreadable = True
    return setup


def fifo(rel: str):
    """A set-up: *rel* becomes a named pipe (whatever was written there is removed first).
    Opening it for reading would block until a writer comes, that is for ever."""

    def setup(root: Path) -> None:
        _clear(root / rel)
        os.mkfifo(root / rel)

    return setup


def unix_socket(rel: str):
    """A set-up: *rel* becomes a Unix domain socket (bound, then closed: the socket file
    stays)."""

    def setup(root: Path) -> None:
        path = root / rel
        _clear(path)
        # bind() takes a path of at most 107 bytes: bind from inside the folder
        here = os.getcwd()
        os.chdir(path.parent)
        try:
            with socket.socket(socket.AF_UNIX, socket.SOCK_STREAM) as s:
                s.bind(path.name)
        finally:
            os.chdir(here)
        assert stat.S_ISSOCK(os.lstat(path).st_mode)

    return setup


def device(rel: str):
    """A set-up: *rel* becomes a character device with the numbers of /dev/null (1, 3 on Linux;
    devices.txt of the kernel's documentation). Never opened by the tests."""

    def setup(root: Path) -> None:
        path = root / rel
        _clear(path)
        try:
            os.mknod(path, stat.S_IFCHR | 0o644, os.makedev(1, 3))
        except PermissionError:
            pytest.skip("making a device file needs the right to (CAP_MKNOD)")

    return setup


def dangling(rel: str, target: str = "gone.csv"):
    """A set-up: *rel* becomes a link to *target*, which does not exist."""

    def setup(root: Path) -> None:
        _clear(root / rel)
        os.symlink(target, root / rel)

    return setup


def loop(rel: str):
    """A set-up: *rel* becomes a link to itself."""

    def setup(root: Path) -> None:
        path = root / rel
        _clear(path)
        os.symlink(path.name, path)

    return setup


def folder(rel: str):
    """A set-up: *rel* becomes an (empty) folder."""

    def setup(root: Path) -> None:
        _clear(root / rel)
        (root / rel).mkdir()

    return setup


def link_out(
    rel: str,
    content: str | None = None,
    *,
    unreadable_target: bool = False,
    is_folder: dict | None = None,
):
    """A set-up: *rel* becomes a link to a file (or, with *is_folder*, a folder holding those
    files) beside the projects folder, outside it. The target may be made unreadable: a build
    that read it would fail."""

    def setup(root: Path) -> None:
        outside = root.parent / "outside"
        outside.mkdir(exist_ok=True)
        path = root / rel
        _clear(path)
        if is_folder is not None:
            target = outside / Path(rel).name
            target.mkdir()
            for name, text in is_folder.items():
                (target / name).write_text(text, encoding="utf-8")
        else:
            target = outside / Path(rel).name
            target.write_text(content or "", encoding="utf-8")
            if unreadable_target:
                os.chmod(target, 0)
        os.symlink(target, path)

    setup.unreadable = unreadable_target
    return setup


def both(*setups):
    """Several set-ups, in order."""

    def setup(root: Path) -> None:
        for s in setups:
            s(root)

    setup.unreadable = any(getattr(s, "unreadable", False) for s in setups)
    return setup


def needs_bound_permissions(setup) -> bool:
    """True for a set-up that makes a file unreadable: its case runs in
    :func:`permissions_bind`."""
    return bool(getattr(setup, "unreadable", False))


def _clear(path: Path) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    if path.is_symlink() or path.is_file():
        path.unlink()
