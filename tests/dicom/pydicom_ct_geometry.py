#!/usr/bin/env python3
"""Independent reader for the CT cross-check: reads every CT Image Storage file of a folder with
pydicom (not DCMTK, not our code), places every pixel in patient coordinates from Image Position
and Image Orientation (Patient) and Pixel Spacing, applies Rescale Slope and Intercept, and prints
the volume's geometry and HU moments, one "key value..." line each. Written from the DICOM
standard (PS3.3 C.7.6.2 Image Plane, C.7.6.3 Image Pixel, C.8.2.1 CT Image), not from the C++ reader.

Usage: pydicom_ct_geometry.py FOLDER
"""
import array
import os
import sys

import pydicom

CT_IMAGE_STORAGE = "1.2.840.10008.5.1.4.1.1.2"


def read_slices(folder):
    slices = []
    for name in sorted(os.listdir(folder)):
        path = os.path.join(folder, name)
        try:
            ds = pydicom.dcmread(path)
        except Exception:  # not DICOM: not part of the series
            continue
        if str(ds.get("SOPClassUID", "")) == CT_IMAGE_STORAGE:
            slices.append(ds)
    slices.sort(key=lambda d: float(d.ImagePositionPatient[2]))
    return slices


def pixel_values(ds):
    words = array.array("H", ds.PixelData)
    if not ds.is_little_endian:
        words.byteswap()
    bits = int(ds.BitsStored)
    mask = (1 << bits) - 1
    signed = int(ds.PixelRepresentation) == 1
    slope = float(ds.RescaleSlope)
    intercept = float(ds.RescaleIntercept)
    for raw in words[: int(ds.Rows) * int(ds.Columns)]:
        value = raw & mask
        if signed and value & (1 << (bits - 1)):
            value -= 1 << bits
        yield round(slope * value + intercept)


def main():
    slices = read_slices(sys.argv[1])
    first = slices[0]
    rows, cols = int(first.Rows), int(first.Columns)
    row_spacing, col_spacing = (float(v) for v in first.PixelSpacing)
    r = [float(v) for v in first.ImageOrientationPatient[:3]]
    c = [float(v) for v in first.ImageOrientationPatient[3:]]
    total = [0, 0.0, 0.0, 0.0]  # sum of HU, and of HU times x, y, z
    low = [float("inf")] * 3
    for ds in slices:
        ipp = [float(v) for v in ds.ImagePositionPatient]
        for n, hu in enumerate(pixel_values(ds)):
            j, i = divmod(n, cols)
            p = [ipp[a] + i * col_spacing * r[a] + j * row_spacing * c[a] for a in range(3)]
            low = [min(low[a], p[a]) for a in range(3)]
            total[0] += hu
            for a in range(3):
                total[a + 1] += hu * p[a]
    z = [float(ds.ImagePositionPatient[2]) for ds in slices]
    print("size", cols, rows, len(slices))
    print("origin", *low)
    print("spacing", col_spacing, row_spacing, (z[-1] - z[0]) / (len(z) - 1))
    print("hu_sum", total[0])
    print("hu_moments", total[1], total[2], total[3])
    print("frame", first.FrameOfReferenceUID)
    print("series", first.SeriesInstanceUID)
    print("station", first.get("StationName", ""))
    print("slices", *(ds.SOPInstanceUID for ds in slices))


if __name__ == "__main__":
    main()
