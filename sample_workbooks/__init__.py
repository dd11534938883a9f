"""The sample planning workbooks of two invented places, shipped as ``prepkit.samples``.

``prepkit demo`` runs ``vellmora_city.xlsx``. Every figure in them is invented
for the demonstration; see ``README.md`` in this folder.
"""
