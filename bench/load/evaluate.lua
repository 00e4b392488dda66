-- wrk script: POST one evaluation per request (invented scenario: Harrow Basin Gas Co., site kestrel-ridge).
wrk.method = "POST"
wrk.headers["Content-Type"] = "application/json"
-- The body is bench/load/evaluate.json (the soak sends the same one); the scripts run from the repository root.
local file = assert(io.open("bench/load/evaluate.json", "r"))
wrk.body = file:read("*a")
file:close()

-- Count non-2xx answers so a run with errors cannot pass as a throughput figure.
local failures = 0
function response(status, headers, body)
  if status < 200 or status > 299 then
    failures = failures + 1
  end
end

function done(summary, latency, requests)
  io.write(string.format("non-2xx: %d\n", summary.errors.status))
  io.write(string.format("p50 %.2f ms, p99 %.2f ms\n", latency:percentile(50) / 1000, latency:percentile(99) / 1000))
end
