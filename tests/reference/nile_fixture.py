"""Writes fixtures/reference/nile.json: annual flow of the Nile at Aswan, 1871-1970, as carried by Debian's
python3-statsmodels (statsmodels.datasets.nile), for tests/engine/shifts.test.ts. Run from the repo root with
Debian's interpreter (the package installs there):
    apt-get install -y python3-statsmodels
    /usr/bin/python3 tests/reference/nile_fixture.py
"""
import json
import subprocess

import statsmodels
from statsmodels.datasets import nile

data = nile.load_pandas().data
debian = subprocess.run(
    ["dpkg-query", "-W", "-f=${Version}", "python3-statsmodels"], capture_output=True, text=True, check=True
).stdout
out = {
    "source": {
        "package": "Debian python3-statsmodels " + debian + " (statsmodels " + statsmodels.__version__ + "), statsmodels.datasets.nile",
        "description": " ".join(nile.DESCRSHORT.split()),
        "citation": " ".join(nile.SOURCE.split()),
        "copyright": " ".join(nile.COPYRIGHT.split()),
        "unit": "10^8 m^3 per year",
    },
    # Cobb (1978) places the change of level at 1898/1899 (the first year of the lower level is 1899);
    # the Aswan dam was begun in 1898 (from memory).
    "publishedChange": {"firstYearOfNewLevel": 1899, "tolerance": 1, "reference": "Cobb (1978), Biometrika 65, 243-251"},
    "year": [int(y) for y in data["year"]],
    "volume": [float(v) for v in data["volume"]],
}
with open("fixtures/reference/nile.json", "w") as f:
    json.dump(out, f, indent=1)
print(f"wrote {len(out['year'])} years")
