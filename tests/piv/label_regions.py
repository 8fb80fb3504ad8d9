# Reference labelling for detection_test: scipy.ndimage.label with 8-connectivity.
# Usage: label_regions.py MASK.txt LABELS.txt  (whitespace-separated 0/1 rows)
import sys

import numpy as np
from scipy import ndimage

mask = np.loadtxt(sys.argv[1], dtype=np.int64, ndmin=2)
labels, count = ndimage.label(mask, structure=np.ones((3, 3), dtype=int))
np.savetxt(sys.argv[2], labels, fmt="%d")
print(count)
