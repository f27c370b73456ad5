"""The cache: one file store and one entry form for every kind of cached thing.

``files``      folder policy (0700, owner checks), private reads, atomic writes, digests
``entries``    the entry frame and its checks, the cache folder, the size limit (LRU pruning)
``keys``       parse keys and the code stamps every namespace is versioned with
``codec``      the positional JSON codec (IR and designs)
``parse``      :class:`ParseCache`: the entry store (namespace ``parse`` and the others' base)
``namespace``  one stamped namespace (base of the three below)
``design``     elaborated designs (``design_key``)
``result``     the findings of a run (``result_key``)
``report``     finished command-line reports
"""
