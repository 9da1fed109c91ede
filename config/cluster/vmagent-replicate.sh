#!/bin/sh
# vmagent in front of two VictoriaMetrics nodes: every point to each (replication); buffered on disk
# while a node is down and delivered when it is back. strainward's database.url points here.
# Start each VictoriaMetrics node with -dedup.minScrapeInterval=1ms (and -inmemoryDataFlushInterval=1s
# to shorten what a crashed node loses): a scan delivered twice is then stored once.
exec vmagent -httpListenAddr=127.0.0.1:8429 -remoteWrite.tmpDataPath=/var/lib/strainward-vmagent \
  -remoteWrite.url=http://127.0.0.1:8428/api/v1/write \
  -remoteWrite.url=http://127.0.0.1:8438/api/v1/write
