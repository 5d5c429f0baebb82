"""Write the awkward-input corpus: small files whose exact bytes matter (encodings, marks).

Run ``python tests/io/corpus/make_corpus.py`` to regenerate; ``test_corpus_is_current``
checks that the committed files equal what this script writes. All data is invented.
"""

from __future__ import annotations

import codecs
import random
from pathlib import Path

HERE = Path(__file__).resolve().parent


def files() -> dict[str, bytes]:
    out: dict[str, bytes] = {}
    out["semicolon_decimal_comma.csv"] = (
        b"part;weight kg;price\r\nbolt;1,5;2,25\r\nnut;0,75;10,5\r\nwasher;12;-0,125\r\n"
    )
    out["thousands_comma.csv"] = (
        b'item,amount,units\nA-1,"1,234.5",3\nB-2,"12,345,678.25",4\nC-3,999.5,5\n'
    )
    out["thousands_space.csv"] = b"qty;total\n1;1 234,5\n2;12 345,75\n3;7,5\n"
    out["cp1252_headers.csv"] = (
        "Réf;Qté;Désignation;Température\n1;2;Crème brûlée;-3,5\n2;4;Pâte à choux;21,25\n"
    ).encode("cp1252")
    out["utf16_tab.tsv"] = codecs.BOM_UTF16_LE + (
        "name\tscore\tnote\nÅsa\t1.25\tok\nŽan\t-2\t€ paid\n"
    ).encode("utf-16-le")
    out["utf8_bom.csv"] = codecs.BOM_UTF8 + "città,valore\nRoma Nord,10\nÉvry,20\n".encode()
    out["title_lines.csv"] = (
        b"Quarterly widget counts (invented)\nprepared by the test suite\n\n"
        b"region,count,share\nnorth,12,0.25\nsouth,7,0.5\n\n"
    )
    out["odd_headers.csv"] = ("x,x,,Größe (m²),x,x (2)\n1,2,3,4,5,6\n7,8,9,10,11,12\n").encode()
    out["identifiers.csv"] = (
        b"zip,account,order,sku,amount\n"
        b"00412,12345678901234567890,20190403,AB-1042,10\n"
        b"01234,98765432109876543210,20200101,XY-0007,20.5\n"
        b"99501,11111111111111111111,20211231,QQ-9,-3\n"
    )
    out["formula_text.csv"] = b'label,value\n=SUM(A1),1\n+44,2\n-x,3\n@me,4\n"=1+2",5\n'
    out["dates.csv"] = (
        b"iso,dmy,mdy,stamp\n"
        b"2019-04-03,03/04/2019,04/30/2019,2019-04-03 13:45:00\n"
        b"2020-12-31,25/12/2020,12/25/2020,2020-12-31 00:00:00\n"
        b",,,\n"
        b"2021-01-15,15/01/2021,01/15/2021,2021-01-15 08:00:30\n"
    )
    out["pipe.txt"] = b"a|b|c\n1|x|true\n2|y|false\n3||TRUE\n"
    out["ragged_long.csv"] = b"a,b,c\n1,2,3\n4,5,6,7\n8,9,10\n"
    out["ragged_short.csv"] = b"Title line\na;b;c\n1;2;3\n4;5;6\n7;8\n"
    out["empty.csv"] = b""
    out["blank_lines.csv"] = b"\n\r\n   \n\n"
    rng = random.Random(20240601)
    out["garbage.csv"] = bytes(rng.randrange(256) for _ in range(4096))
    out["quoted_newlines.csv"] = (
        b'id,comment,value\n1,"line one\nline two",1.5\n2,"has ""quotes"", and comma",2.5\n'
    )
    out["missing_markers.csv"] = b"k,v\na,1.5\nb,NA\nc,\nd,2\n"
    return out


def main() -> None:
    for name, data in files().items():
        (HERE / name).write_bytes(data)


if __name__ == "__main__":
    main()
