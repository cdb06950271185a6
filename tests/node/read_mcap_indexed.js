// read_mcap_indexed.js FILE.mcap [T0_NS T1_NS]: open an MCAP file through its
// summary with @mcap/core's McapIndexedReader (footer, summary offsets,
// statistics, chunk indexes, message indexes; CRCs checked) and decode each
// message with @foxglove/rosmsg2-serialization's MessageReader.  Print JSON:
// {"chunks": N, "data_end": byte, "data_crc": CRC-32 the data end record states, "stats": {"messages": N, "channels": {topic: count}},
//  "topics": {topic: [type, count]}, "clouds": [[sec, nanosec, log_time,
//  fields [[name, offset, datatype]], point_step, data_hex], ...],
//  "poses": [[sec, nanosec, log_time, x, y, z, qx, qy, qz, qw], ...],
//  "window": [log_time, ...]} -- the window: the log times readMessages finds
// between T0_NS and T1_NS.  For tests/xcheck_mcap.py: an MCAP file revisit
// writes must open in the reference reader that seeks by its index.
"use strict";
const fs = require("fs");
const { McapIndexedReader } = require("@mcap/core");
const { parse } = require("@foxglove/rosmsg");
const { MessageReader } = require("@foxglove/rosmsg2-serialization");

async function main() {
  const buf = fs.readFileSync(process.argv[2]);
  const readable = {
    size: async () => BigInt(buf.length),
    read: async (off, n) => buf.subarray(Number(off), Number(off + n)),
  };
  const r = await McapIndexedReader.Initialize({ readable });
  const readers = new Map(), out = { chunks: r.chunkIndexes.length, data_end: Number(r.dataEndOffset),
                                     data_crc: r.dataSectionCrc, topics: {}, clouds: [], poses: [], window: [] };
  const st = r.statistics;
  out.stats = st ? { messages: Number(st.messageCount), channels: {} } : null;
  for (const [id, c] of r.channelsById) {
    const s = r.schemasById.get(c.schemaId);
    readers.set(id, { topic: c.topic, type: s.name,
                      reader: new MessageReader(parse(Buffer.from(s.data).toString(), { ros2: true })) });
    if (st) out.stats.channels[c.topic] = Number(st.channelMessageCounts.get(id));
  }
  for await (const m of r.readMessages({ validateCrcs: true })) {
    const c = readers.get(m.channelId);
    const t = (out.topics[c.topic] = out.topics[c.topic] || [c.type, 0]);
    t[1]++;
    const d = c.reader.readMessage(m.data), h = d.header.stamp, lt = m.logTime.toString();
    if (c.type === "sensor_msgs/msg/PointCloud2") {
      out.clouds.push([h.sec, h.nanosec, lt, d.fields.map((f) => [f.name, f.offset, f.datatype]), d.point_step,
                       Buffer.from(d.data).toString("hex")]);
    } else {
      const p = d.pose.pose;
      out.poses.push([h.sec, h.nanosec, lt, p.position.x, p.position.y, p.position.z,
                      p.orientation.x, p.orientation.y, p.orientation.z, p.orientation.w]);
    }
  }
  if (process.argv.length > 4) {
    const w = { startTime: BigInt(process.argv[3]), endTime: BigInt(process.argv[4]), topics: ["/points"] };
    for await (const m of r.readMessages(w)) out.window.push(m.logTime.toString());
  }
  console.log(JSON.stringify(out));
}
main().catch((err) => { console.error(String(err && err.stack || err)); process.exit(1); });
