"""Presenters: rich tables, JSON, CSV and Markdown, and the files of a run. They only read results."""

CAUTION = (
    "Screening estimate only. High-pressure pumps and vessels, steam and hot brine, and draw chemicals are hazardous; "
    "drinking-water quality and brine discharge are regulated. Local codes, regulators and licensed engineers decide "
    "any design."
)
