#!/usr/bin/python3
"""Write the dialect fixtures: good.csv (id,group,a,b,c; four rows) in the
spellings other programs write, plus a few bad encodings. Run from this
directory with /usr/bin/python3 (standard library only); the files
reproduce byte for byte. Every "good" variant reads to the same data set
as good.csv with the options named in internal/dataset/dialect_test.go."""
import gzip
import io

good = open("good.csv", encoding="utf-8").read()
rows = [line.split(",") for line in good.splitlines()]


def join(sep, rs, decimal=None):
    out = []
    for r in rs:
        cells = r if decimal is None else [c.replace(".", decimal) for c in r]
        out.append(sep.join(cells))
    return "\n".join(out) + "\n"


def write(name, data):
    if isinstance(data, str):
        data = data.encode("utf-8")
    with open(name, "wb") as f:
        f.write(data)


def gz(data):
    # mtime=0 so the bytes do not depend on the day they were made.
    buf = io.BytesIO()
    with gzip.GzipFile(fileobj=buf, mode="wb", mtime=0) as z:
        z.write(data)
    return buf.getvalue()


write("dialect_semicolon.csv", join(";", rows))
write("dialect_semicolon_decimal_comma.csv", join(";", rows, decimal=","))
write("dialect_sep_line.csv", "sep=;\n" + join(";", rows))
write("dialect_utf16le_bom.csv", "\ufeff".encode("utf-16-le") + good.encode("utf-16-le"))
write("dialect_utf16be_bom.csv", "\ufeff".encode("utf-16-be") + good.encode("utf-16-be"))
write("dialect_utf16_no_bom.csv", good.encode("utf-16-le"))
write("dialect_cr_only.csv", good.replace("\n", "\r"))
write("dialect_spaces.txt", "\n".join("  ".join(c.rjust(6) for c in r) for r in rows) + "\n")
write("dialect_headerless.csv", join(",", rows[1:]))
write("dialect_negative_zero.csv", good.replace("p3,x,-1e-3,0,2", "p3,x,-1e-3,-0,2"))
write("dialect_gzip_no_ext.csv", gz(good.encode("utf-8")))
write("dialect_double.csv.gz", gz(gz(good.encode("utf-8"))))
write("dialect_latin1_id.csv", good.replace("p2,", "caf\u00e9,").encode("latin-1"))
write("dialect_latin1_header.csv", good.replace("id,group,a,b,c", "id,group,a,b,\u00e9t\u00e9").encode("latin-1"))
