"""The cautions shown wherever results are shown (DOMAIN.md, last section)."""

CAUTION = (
    "esdsurge gives an engineering check that depends on its input data (wave speeds, valve "
    "curves, pump data, limits). It does not replace a surge study signed by a competent "
    "engineer, the applicable codes and class rules, the terminal's regulations or the "
    "carrier's own data. Stroke times must be confirmed by test on site; defer to local codes "
    "and licensed engineering practice."
)

SHORT_CAUTION = (
    "Check only — confirm with a competent engineer's surge study, local codes and an on-site "
    "stroke test."
)
