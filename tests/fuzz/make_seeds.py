"""Writes the fuzz target's seed corpus (tests/fuzz/seeds): a few inputs that reach each missing-value
pattern, each correlation kind, a fit of complete data and a correlation matrix, laid out as
fuzz_capi.cpp reads its bytes. Run with /usr/bin/python3 after changing that layout; libFuzzer
finds the rest from these."""

import pathlib

HERE = pathlib.Path(__file__).resolve().parent / "seeds"


def likert(rows, cols, seed):
    # Codes 1..5 (fuzz_capi.cpp's coded(): b % 5 + 1) from a fixed linear congruential sequence.
    out, state = [], seed
    for i in range(rows * cols):
        state = (state * 1103515245 + 12345) % 2 ** 31
        out.append((state >> 16) % 5 if i % cols < cols // 2 else ((state >> 16) + i // cols) % 5)
    return bytes(out)


def raw(rows, cols, word, pattern, flags, tail=b""):
    # mode 0 (raw, Likert codes), rows, cols, layout 0 (row-major), values, the rotation word for the
    # name lookup, the missing-value pattern byte(s), the item-names byte, the correlation flags.
    return (bytes([0, rows, cols, 0]) + likert(rows, cols, rows * 31 + cols) + bytes([len(word)]) + word
            + pattern + bytes([0, flags]) + tail)


SEEDS = {
    "disjoint-spearman": raw(8, 3, b" varimax ", bytes([2]), 1),
    "one-shared-row-polychoric": raw(10, 4, b"OBLIMIN\t", bytes([3 | 1 << 3]), 32),
    "whole-item-missing-pearson": raw(12, 4, b"none", bytes([1 | 2 << 3]), 0),
    "first-rows-only-listwise": raw(12, 5, b"geomin", bytes([4 | 1 << 3, 2]), 2),
    "complete-fit-scores": raw(40, 6, b"promax", bytes([0]), 0, bytes([5, 2, 7, 1, 3, 9, 4, 1, 1, 0, 2, 1])),
    # complete data through a fit, split-sample replication, the hold-out check and a restricted fit
    "complete-fit-replication": raw(40, 6, b"oblimin", bytes([0]), 0, bytes([77, 31, 190, 6, 131, 115, 20, 157, 152, 95, 102, 210, 18, 247, 178, 122, 210, 56, 193, 38, 159, 134, 113, 170, 172, 10, 75, 48, 178, 40, 239, 226, 91, 164, 247, 149, 69, 63, 88, 6])),
    # mode 1: a correlation matrix of `cols` items with n_obs = rows, Likert-derived entries.
    "correlation-matrix": bytes([1, 40, 5, 0]) + bytes([3] * 15) + bytes([0]),
}

if __name__ == "__main__":
    HERE.mkdir(exist_ok=True)
    for name, data in SEEDS.items():
        (HERE / name).write_bytes(data)
