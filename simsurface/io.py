"""Safe file output: nothing truncated is ever visible under a final name."""

from __future__ import annotations

import contextlib
import json
import os
import tempfile
from pathlib import Path
from typing import Any, Iterator

from .outdir import record_output

__all__ = ["atomic_path", "package_versions", "save_figure_atomic", "write_json_atomic", "write_netcdf_atomic",
           "write_text_atomic"]


@contextlib.contextmanager
def atomic_path(path: str | Path, suffix: str | None = None, *, record: bool = True) -> Iterator[Path]:
    """Yield a temporary path next to ``path``; move it into place only if the block succeeds.

    The temporary file lives in the same folder (so ``os.replace`` is atomic on POSIX) and is removed
    when the block raises, e.g. on Ctrl-C. With ``record`` the file is noted as an output of the run that
    holds its folder (:func:`simsurface.outdir.record_output`), so the next fresh run there removes it.
    """
    target = Path(path)
    target.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=suffix or ".tmp", dir=target.parent)
    os.close(fd)
    tmp_path = Path(tmp)
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(tmp_path, 0o666 & ~umask)  # mkstemp creates 0600; give the final file ordinary permissions
    try:
        yield tmp_path
        if record:
            record_output(target)
        os.replace(tmp_path, target)
    except BaseException:
        with contextlib.suppress(FileNotFoundError):
            tmp_path.unlink()
        raise


def write_text_atomic(path: str | Path, text: str, *, record: bool = True) -> None:
    with atomic_path(path, record=record) as tmp:
        tmp.write_text(text, encoding="utf-8")


def write_json_atomic(path: str | Path, data: Any, *, record: bool = True) -> None:
    write_text_atomic(path, json.dumps(data, indent=2, sort_keys=False, default=_json_default) + "\n", record=record)


def write_netcdf_atomic(dataset, path: str | Path) -> None:
    """Write an xarray Dataset as NetCDF through a temporary file."""
    with atomic_path(path, suffix=".nc.tmp") as tmp:
        dataset.to_netcdf(tmp)


def save_figure_atomic(fig, path: str | Path, dpi: int = 130) -> None:
    with atomic_path(path, suffix=".png.tmp") as tmp:
        fig.savefig(tmp, format="png", dpi=dpi, bbox_inches="tight")


def _json_default(obj: Any) -> Any:
    import numpy as np

    if isinstance(obj, np.generic):
        return obj.item()
    if isinstance(obj, np.ndarray):
        return obj.tolist()
    if isinstance(obj, Path):
        return str(obj)
    raise TypeError(f"not JSON serializable: {type(obj).__name__}")


def package_versions() -> dict[str, str]:
    """Versions of simsurface and the libraries that shape its numbers."""
    from importlib import metadata

    out = {}
    for name in ("simsurface", "numpy", "scipy", "kwant", "xarray", "netCDF4", "dask", "distributed"):
        try:
            out[name] = metadata.version(name)
        except metadata.PackageNotFoundError:
            out[name] = "not installed"
    import platform

    out["python"] = platform.python_version()
    return out
