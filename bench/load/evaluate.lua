-- wrk script: POST one evaluation per request (invented scenario: Harrow Basin Gas Co., site kestrel-ridge).
wrk.method = "POST"
wrk.headers["Content-Type"] = "application/json"
wrk.body = [[
{"asset":"K-101A","site":{"id":"kestrel-ridge","elevation":"350 m"},"gas":{"preset":"dry-air","relativeHumidity":0.6},
 "stages":[{"suction":{"pressure":"0.2 barg","temperature":"35 °C"},"discharge":{"pressure":"2.6 barg"},
   "efficiency":{"isentropic":0.80,"uncertainty":0.03},
   "equipment":{"compressorType":"recip-lubricated","lubricant":"mineral-vdl","valveMaterial":"peek","sealMaterial":"fkm"},
   "operation":{"normalDischargeTemperature":"140 °C","coolantInletTemperature":"45 °C","unloadedRunning":false},
   "measured":{"dischargeTemperature":"141 °C"}}]}
]]

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
