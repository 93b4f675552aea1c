#!/usr/bin/env python3
"""Reference SHA-256 digests for TableTest, computed independently of the Java code (Python
standard library only: struct, hashlib, csv) from the encoding documented on Table.sha256():

  int32 column count, int32 row count (little-endian),
  per column: int32 byte length of the UTF-8 name, the UTF-8 bytes, b'C' (continuous) or b'B' (binary),
  per cell, row by row: int64 little-endian IEEE-754 bits, every NaN as 0x7ff8000000000000.

Run from this folder:  python3 table_sha256.py
"""
import csv
import hashlib
import math
import struct
from pathlib import Path

CANONICAL_NAN = 0x7FF8000000000000


def digest(names, kinds, rows):
    h = hashlib.sha256()
    h.update(struct.pack('<ii', len(names), len(rows)))
    for name, kind in zip(names, kinds):
        b = name.encode('utf-8')
        h.update(struct.pack('<i', len(b)) + b + kind)
    for row in rows:
        for v in row:
            if math.isnan(v):
                h.update(struct.pack('<Q', CANONICAL_NAN))
            else:
                h.update(struct.pack('<d', v))
    return h.hexdigest()


def main():
    iris = Path(__file__).resolve().parents[3] / 'data' / 'iris.csv'
    with open(iris, newline='') as f:
        records = list(csv.reader(f))
    names, rows = records[0], [[float(x) for x in r] for r in records[1:]]
    print('iris (all continuous):', digest(names, [b'C'] * len(names), rows))

    # The small mixed table of TableTest.sha256MatchesIndependentImplementation.
    names = ['temp_c', 'door_open', 'r\u00e9gime']
    kinds = [b'C', b'B', b'C']
    rows = [[-18.5, 0.0, 1.0e-300], [float('nan'), 1.0, -0.0], [4.25, float('nan'), 123456789.0]]
    print('small mixed table:', digest(names, kinds, rows))


if __name__ == '__main__':
    main()
