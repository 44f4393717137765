#!/usr/bin/env python3
"""Independent decoder for the character-set cross-check: prints, as hexadecimal UTF-8, the value
of one text attribute of a DICOM file as pydicom decodes it from the file's Specific Character Set
(pydicom's own code, not DCMTK's, not ours). Bytes pydicom cannot decode become U+FFFD.

Usage: pydicom_text.py FILE KEYWORD
"""
import sys
import warnings

import pydicom

if __name__ == "__main__":
    if len(sys.argv) != 3:
        sys.exit(__doc__)
    warnings.simplefilter("ignore")  # pydicom warns when it replaces bytes; the output shows it
    ds = pydicom.dcmread(sys.argv[1])
    ds.decode()
    print(str(ds.get(sys.argv[2], "")).strip().encode("utf-8").hex())
