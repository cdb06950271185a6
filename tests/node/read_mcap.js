// read_mcap.js FILE.mcap: read an MCAP file with @mcap/core's McapStreamReader
// and decode each message with @foxglove/rosmsg2-serialization's
// MessageReader (schemas parsed by @foxglove/rosmsg, ROS 2); print JSON:
// {"done": bool, "topics": {topic: [type, count]}, "clouds": [[width,
// point_step, x0, y0, z0], ...], "poses": [[sec, nanosec, x, y, z, qx, qy,
// qz, qw], ...]}.  For tests/xcheck_mcap.py: an MCAP file revisit writes
// must open in the reference reader.
"use strict";
const fs = require("fs");
const { McapStreamReader } = require("@mcap/core");
const { parse } = require("@foxglove/rosmsg");
const { MessageReader } = require("@foxglove/rosmsg2-serialization");

const r = new McapStreamReader({ validateCrcs: true });
r.append(fs.readFileSync(process.argv[2]));
const schemas = new Map(), channels = new Map(), out = { topics: {}, clouds: [], poses: [] };
for (let rec; (rec = r.nextRecord()); ) {
  if (rec.type === "Schema") schemas.set(rec.id, rec);
  if (rec.type === "Channel") {
    const s = schemas.get(rec.schemaId);
    channels.set(rec.id, { topic: rec.topic, type: s.name,
                           reader: new MessageReader(parse(Buffer.from(s.data).toString(), { ros2: true })) });
  }
  if (rec.type === "Message") {
    const c = channels.get(rec.channelId);
    const t = (out.topics[c.topic] = out.topics[c.topic] || [c.type, 0]);
    t[1]++;
    const m = c.reader.readMessage(rec.data);
    if (c.type === "sensor_msgs/msg/PointCloud2") {
      const dv = new DataView(m.data.buffer, m.data.byteOffset, m.data.byteLength);
      out.clouds.push([m.width, m.point_step, dv.getFloat32(0, true), dv.getFloat32(4, true), dv.getFloat32(8, true)]);
    } else {
      const p = m.pose.pose;
      out.poses.push([m.header.stamp.sec, m.header.stamp.nanosec, p.position.x, p.position.y, p.position.z,
                      p.orientation.x, p.orientation.y, p.orientation.z, p.orientation.w]);
    }
  }
}
out.done = r.done();
console.log(JSON.stringify(out));
