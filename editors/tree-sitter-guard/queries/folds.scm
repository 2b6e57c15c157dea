; Every block folds: a regulator, its sections, its fault cases.
(body) @fold
