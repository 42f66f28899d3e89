"""Writes decimal-reference.csv: decimal texts and, beside each, the IEEE 754 binary64 bits that
CPython's float() gives for it (correctly rounded, round-half-even; CPython's dtoa.c). The Java
test reads the value columns with weft's CSV reader and compares bit for bit.

Run once with python3 (standard library only); the output is committed, the run is not repeated by
the build: python3 make_decimal_reference.py > decimal-reference.csv
"""
import random
import struct


def bits(text):
    return struct.pack(">d", float(text)).hex()


# Texts whose rounding is delicate (halfway cases, subnormals, the largest double).
SPECIAL = [
    "0.1", "-0.1", "0.3", "1e23", "9007199254740993", "9007199254740995", "2.2250738585072011e-308",
    "2.2250738585072014e-308", "4.9e-324", "2.4703282292062328e-324", "1.7976931348623157e308",
    "0.5000000000000000555111512312578270211815834045410156250000001", "-0", ".5", "5.", "+3.25E+2",
    "123456789012345678901234567890", "1.00000000000000011102230246251565404236316680908203125",
]

rng = random.Random(20240601)
rows = []
for i in range(120):
    t = "%.3f" % (i * 0.004)
    values = []
    for k in range(3):
        if i < len(SPECIAL) and k == 0:
            values.append(SPECIAL[i])
            continue
        digits = "".join(rng.choice("0123456789") for _ in range(rng.randint(1, 21)))
        point = rng.randint(0, len(digits))
        text = digits[:point] + "." + digits[point:] if point < len(digits) else digits
        if rng.random() < 0.5:
            text += "e%d" % rng.randint(-330, 280)
        if rng.random() < 0.4:
            text = "-" + text
        values.append(text)
    rows.append([t] + values + [bits(t)] + [bits(v) for v in values])

print("# decimal texts and the binary64 bits CPython's float() gives for them (see make_decimal_reference.py)")
print("time,a,b,c,time_bits,a_bits,b_bits,c_bits")
for r in rows:
    print(",".join(r))
