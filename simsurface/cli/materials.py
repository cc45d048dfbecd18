"""``simsurface materials``: list the material presets and their sources."""

from __future__ import annotations

import argparse

from ..materials import PRESETS
from ..models.bulk_params import PRESETS as BULK_PRESETS, surface_preset_comparison


def register(sub) -> None:
    p = sub.add_parser("materials", help="list material presets with their sources")
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    for m in PRESETS.values():
        print(m.name)
        for key in ("dirac_velocity_m_s", "bulk_gap_meV", "effective_mass_ratio", "surface_g_factor",
                    "rashba_meV_nm"):
            value = getattr(m, key)
            if value is not None:
                print(f"  {key} = {value:g}    [{m.sources.get(key, '')}]")
            elif key in m.sources:
                print(f"  {key}: {m.sources[key]}")
    print("3D four-band parameter sets ([model] kind = 'bulk_lattice'; docs/bulk.md):")
    for params in BULK_PRESETS.values():
        print(f"  {surface_preset_comparison(params)['note']}")
    return 0
