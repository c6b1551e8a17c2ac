"""From a design to its parts: specifications and DXF outlines a maker can use.

``springsynth export`` builds, per design, ``spec.csv`` and ``spec.json`` (one record per
element) and, for every flat part, a DXF outline in mm with a PNG preview:

* :mod:`.spec`    pure functions from a design and its stroke to records and outline profiles;
* :mod:`.outline` ezdxf documents built in memory, their audit and preview images;
* :mod:`.bundle`  the files of an export folder, in memory.

Nothing here touches the disk: :func:`springsynth.io.export_folder.write_folder` writes a
bundle all or nothing.
"""

from __future__ import annotations

from springsynth.export.bundle import export_files, outlines, previews, run_specs, spec_csv, spec_json
from springsynth.export.spec import (
    COIL_KINDS,
    END_TYPES,
    FLAT_KINDS,
    RULES,
    SOLID_KINDS,
    DesignSpec,
    PartRef,
    Profile,
    Stroke,
    coil_ends,
    design_spec,
    parts,
)

__all__ = [
    "COIL_KINDS", "END_TYPES", "FLAT_KINDS", "RULES", "SOLID_KINDS", "DesignSpec", "PartRef", "Profile", "Stroke",
    "coil_ends", "design_spec", "export_files", "outlines", "parts", "previews", "run_specs", "spec_csv", "spec_json",
]
