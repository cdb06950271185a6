// write_mcap.js SPEC.json OUT.mcap: an MCAP file of ROS 2 messages (CDR) for
// tests/xcheck_mcap.py, written by the npm packages @mcap/core (McapWriter,
// chunks compressed through its compressChunk hook), @foxglove/rosmsg
// (parse, ros2) and @foxglove/rosmsg2-serialization (MessageWriter); chunk
// compression by lz4js (LZ4 frames) or @bokuweb/zstd-wasm.  SPEC lists the
// clouds, odometry and transforms in the order to write them.
"use strict";
const fs = require("fs");
const { McapWriter } = require("@mcap/core");
const { parse } = require("@foxglove/rosmsg");
const { MessageWriter } = require("@foxglove/rosmsg2-serialization");
const lz4 = require("lz4js");
const zstd = require("@bokuweb/zstd-wasm");

const SEP = "\n================================================================================\nMSG: ";
const TIME = "builtin_interfaces/Time\nint32 sec\nuint32 nanosec";
const HEADER = "std_msgs/Header\nbuiltin_interfaces/Time stamp\nstring frame_id";
const VEC = "geometry_msgs/Vector3\nfloat64 x\nfloat64 y\nfloat64 z";
const QUAT = "geometry_msgs/Quaternion\nfloat64 x 0\nfloat64 y 0\nfloat64 z 0\nfloat64 w 1";
const DEFS = {
  "sensor_msgs/msg/PointCloud2": [
    "std_msgs/Header header\nuint32 height\nuint32 width\nsensor_msgs/PointField[] fields\nbool is_bigendian\n" +
      "uint32 point_step\nuint32 row_step\nuint8[] data\nbool is_dense",
    HEADER, TIME, "sensor_msgs/PointField\nstring name\nuint32 offset\nuint8 datatype\nuint32 count"],
  "nav_msgs/msg/Odometry": [
    "std_msgs/Header header\nstring child_frame_id\ngeometry_msgs/PoseWithCovariance pose\n" +
      "geometry_msgs/TwistWithCovariance twist",
    HEADER, TIME, "geometry_msgs/PoseWithCovariance\ngeometry_msgs/Pose pose\nfloat64[36] covariance",
    "geometry_msgs/Pose\ngeometry_msgs/Point position\ngeometry_msgs/Quaternion orientation",
    "geometry_msgs/Point\nfloat64 x\nfloat64 y\nfloat64 z", QUAT,
    "geometry_msgs/TwistWithCovariance\ngeometry_msgs/Twist twist\nfloat64[36] covariance",
    "geometry_msgs/Twist\ngeometry_msgs/Vector3 linear\ngeometry_msgs/Vector3 angular", VEC],
  "tf2_msgs/msg/TFMessage": [
    "geometry_msgs/TransformStamped[] transforms",
    "geometry_msgs/TransformStamped\nstd_msgs/Header header\nstring child_frame_id\n" +
      "geometry_msgs/Transform transform",
    HEADER, TIME, "geometry_msgs/Transform\ngeometry_msgs/Vector3 translation\ngeometry_msgs/Quaternion rotation",
    VEC, QUAT],
};

function schemaText(type) {
  const d = DEFS[type];
  return d[0] + d.slice(1).map((s) => SEP + s).join("");
}

class Collect {
  constructor() { this.parts = []; this.len = 0n; }
  async write(b) { this.parts.push(Buffer.from(b)); this.len += BigInt(b.byteLength); }
  position() { return this.len; }
}

function header(m) { return { stamp: { sec: m.sec, nanosec: m.nsec }, frame_id: m.frame }; }
function pose(m) {
  return { position: { x: m.p[0], y: m.p[1], z: m.p[2] },
           orientation: { x: m.q[0], y: m.q[1], z: m.q[2], w: m.q[3] } };
}
const zeros36 = new Array(36).fill(0);

function build(kind, m) {
  if (kind === "cloud") {
    return { header: header(m), height: m.height, width: m.width, fields: m.fields, is_bigendian: m.is_bigendian,
             point_step: m.point_step, row_step: m.row_step, data: Uint8Array.from(Buffer.from(m.data_hex, "hex")),
             is_dense: true };
  }
  if (kind === "odom") {
    return { header: header(m), child_frame_id: m.child, pose: { pose: pose(m), covariance: zeros36 },
             twist: { twist: { linear: { x: 0, y: 0, z: 0 }, angular: { x: 0, y: 0, z: 0 } }, covariance: zeros36 } };
  }
  return { transforms: [{ header: header(m), child_frame_id: m.child,
                          transform: { translation: { x: m.p[0], y: m.p[1], z: m.p[2] },
                                       rotation: { x: m.q[0], y: m.q[1], z: m.q[2], w: m.q[3] } } }] };
}

async function main() {
  const spec = JSON.parse(fs.readFileSync(process.argv[2], "utf8"));
  await zstd.init();
  const hooks = {
    zstd: (d) => ({ compression: "zstd", compressedData: zstd.compress(Buffer.from(d), 3) }),
    lz4: (d) => ({ compression: "lz4", compressedData: Uint8Array.from(lz4.compress(d)) }),
  };
  const out = new Collect();
  const w = new McapWriter({ writable: out, useChunks: true, chunkSize: spec.chunk_size || 4096,
                             compressChunk: hooks[spec.compression] });
  await w.start({ profile: "ros2", library: "revisit tests" });
  const channels = {};
  const writers = {};
  const types = { cloud: "sensor_msgs/msg/PointCloud2", odom: "nav_msgs/msg/Odometry", tf: "tf2_msgs/msg/TFMessage" };
  for (const [topic, kind] of spec.topics) {
    const type = types[kind];
    const text = schemaText(type);
    const sid = await w.registerSchema({ name: type, encoding: "ros2msg", data: Buffer.from(text) });
    channels[topic] = await w.registerChannel({ topic, schemaId: sid, messageEncoding: "cdr", metadata: new Map() });
    writers[topic] = new MessageWriter(parse(text, { ros2: true }));
  }
  let seq = 0;
  for (const [topic, kind, m] of spec.messages) {
    const t = BigInt(m.sec) * 1000000000n + BigInt(m.nsec);
    await w.addMessage({ channelId: channels[topic], sequence: seq++, logTime: t, publishTime: t,
                         data: writers[topic].writeMessage(build(kind, m)) });
  }
  await w.end();
  fs.writeFileSync(process.argv[3], Buffer.concat(out.parts));
}

main().catch((err) => { console.error("write_mcap: " + (err && err.stack || err)); process.exit(2); });
