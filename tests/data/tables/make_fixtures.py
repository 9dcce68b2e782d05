#!/usr/bin/env python3
"""Writes the small workbook fixtures of tests/wide_tables.rs with tools other than hurdle.

mixed.xlsx is written by openpyxl: a sheet "Notes" and a sheet "Prices" holding a date column
and three price columns in every form a spreadsheet export takes (a real date, a serial number,
ISO text and a date with a time of day; numbers, numbers stored as text, an empty cell).
LibreOffice (headless) converts it to mixed.ods and mixed.xls, and msoffcrypto-tool encrypts it
with the password "fixture" into encrypted.xlsx. The fixtures are committed; rerun this script
only to change them (needs openpyxl, msoffcrypto-tool and soffice).
"""

import datetime
import os
import shutil
import subprocess
import tempfile

import msoffcrypto
import openpyxl

HERE = os.path.dirname(os.path.abspath(__file__))


def mixed(path):
    book = openpyxl.Workbook()
    notes = book.active
    notes.title = "Notes"
    notes["A1"] = "Invented fixture for hurdle's tests; not market data."
    prices = book.create_sheet("Prices")
    prices.append(["date", "Alder", "Birch", "Cedar index"])
    prices.append([datetime.date(2024, 1, 31), 10.5, "20.25", 100])
    prices.append([45351, 11, 21, 101])  # the serial number of 2024-02-29
    prices.append(["2024-03-28", None, "22.5", 102.5])
    prices.append([datetime.datetime(2024, 4, 30, 16, 0), 12.25, " 23 ", 103])
    prices["A2"].number_format = "yyyy-mm-dd"
    prices["A5"].number_format = "yyyy-mm-dd hh:mm"
    book.save(path)


def main():
    source = os.path.join(HERE, "mixed.xlsx")
    mixed(source)
    profile = tempfile.mkdtemp()
    for target in ["ods", "xls"]:
        subprocess.run(["soffice", "--headless", "--norestore", f"-env:UserInstallation=file://{profile}",
                        "--convert-to", target, "--outdir", HERE, source], check=True)
    shutil.rmtree(profile, ignore_errors=True)
    with open(source, "rb") as plain, open(os.path.join(HERE, "encrypted.xlsx"), "wb") as out:
        office = msoffcrypto.OfficeFile(plain)
        office.encrypt("fixture", out)


if __name__ == "__main__":
    main()
