"""What users state: units, ions, solvent, geometry, walls, the case, case files and dotted input paths.

Every object here is SI after construction; pint is used only in this subpackage (``units``)."""
