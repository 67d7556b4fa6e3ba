-- wrk (Debian package) reporter for the balance benchmark: one JSON line with the latency
-- percentiles in milliseconds, request counts and errors (non-2xx/3xx answers count as errors).
done = function(summary, latency, requests)
  local e = summary.errors
  io.write(string.format(
    '{"requests":%d,"seconds":%.3f,"p50":%.2f,"p90":%.2f,"p95":%.2f,"p99":%.2f,"max":%.2f,"status":%d,"connect":%d,"read":%d,"write":%d,"timeout":%d}\n',
    summary.requests, summary.duration / 1e6,
    latency:percentile(50) / 1000, latency:percentile(90) / 1000, latency:percentile(95) / 1000,
    latency:percentile(99) / 1000, latency.max / 1000,
    e.status, e.connect, e.read, e.write, e.timeout))
end
