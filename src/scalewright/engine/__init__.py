"""Running the summary commands on files larger than memory: blocks on one machine, partitions on Dask.

- :mod:`.blocks`: a CSV or Parquet file read block by block into one-byte answer codes (the conversion
  code of :mod:`scalewright.data` and :mod:`scalewright.read_codes`, block by block).
- :mod:`.reading`: what reading found (refused values, missing codes, blanks, ids, group levels) as a
  mergeable summary, so errors name the global row and column exactly as the whole-file route does.
- :mod:`.plan`: which summaries a command needs, and the summary of one block.
- :mod:`.stream`: a file summarised block by block with bounded memory.
- :mod:`.dask_engine`: partitions summarised on Dask workers and merged in a tree.
- :mod:`.choose`: when a command takes the streaming route.
"""
