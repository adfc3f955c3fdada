"""Fixture plugin whose import leaves a mark: a file named by RG_TEST_IMPORT_MARK.

A plugin disabled with REPORTGEN_PLUGINS_DISABLE must never be imported at all.
"""

import os
from pathlib import Path

_mark = os.environ.get("RG_TEST_IMPORT_MARK")
if _mark:
    with Path(_mark).open("a", encoding="utf-8") as fh:
        fh.write("imported\n")


def reportgen_register_calc_types(context):
    return []
