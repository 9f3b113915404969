import draco3d from 'draco3d';
import fs from 'node:fs';
const d = await draco3d.createDecoderModule({});
for (const [f, off, len] of process.argv.slice(2).map(s => s.split(':'))) {
  const bin = fs.readFileSync(f).subarray(+off, +off + +len);
  const dec = new d.Decoder(); const buf = new d.DecoderBuffer(); buf.Init(new Int8Array(bin.buffer, bin.byteOffset, bin.byteLength), bin.byteLength);
  for (const t of [d.POSITION, d.NORMAL, d.TEX_COORD, d.GENERIC, d.COLOR]) dec.SkipAttributeTransform(t); const mesh = new d.Mesh(); const st = dec.DecodeBufferToMesh(buf, mesh); console.log(f, st.ok(), mesh.num_points(), mesh.num_faces(), 'attrs', mesh.num_attributes());
  for (let i = 0; i < mesh.num_attributes(); i++) {
    const a = dec.GetAttribute(mesh, i);
    const q = new d.AttributeQuantizationTransform(); const qi = q.InitFromAttribute(a);
    const o = new d.AttributeOctahedronTransform(); const oi = o.InitFromAttribute(a);
    console.log(' id', a.unique_id(), 'type', a.attribute_type(), 'dt', a.data_type(), 'n', a.num_components(), 'q', qi, qi ? q.quantization_bits() : '-', qi ? q.range() : '', 'oct', oi, oi ? o.quantization_bits() : '-');
  }
}
