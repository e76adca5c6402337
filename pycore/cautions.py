"""The standing cautions every result carries (a check aid, local standards, licensed practice)."""

CAUTIONS = (
    "A check aid only: verify every figure by measurement on the finished spectacles.",
    "Judge results against the standards and regulations in force locally.",
    "Clinical decisions (prescribing prism, slab-off, remedies) belong to licensed "
    "practitioners.",
)
