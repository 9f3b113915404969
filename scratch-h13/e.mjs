import draco3d from 'draco3d';
const m = await draco3d.createEncoderModule({});
const d = await draco3d.createDecoderModule({});
const n = 1000;
const pos = new Float32Array(n*3), tan = new Float32Array(n*4);
const idx = new Uint32Array((n-2)*3);
for (let i=0;i<n;i++){ pos[3*i]=Math.cos(i); pos[3*i+1]=Math.sin(i*1.3); pos[3*i+2]=i/n; const a=i*0.37, b=i*0.11; tan[4*i]=Math.cos(a)*Math.cos(b); tan[4*i+1]=Math.sin(a)*Math.cos(b); tan[4*i+2]=Math.sin(b); tan[4*i+3]= i%3?1:-1; }
for (let t=0;t<n-2;t++){ idx[3*t]=t; idx[3*t+1]=t+1; idx[3*t+2]=t+2; }
for (const bits of [8,10,12,14]) {
const builder = new m.MeshBuilder(); const mesh = new m.Mesh();
builder.AddFacesToMesh(mesh, idx.length/3, idx);
const pid = builder.AddFloatAttribute(mesh, m.POSITION, n, 3, pos);
const tid = builder.AddFloatAttribute(mesh, m.GENERIC, n, 4, tan);
const enc = new m.ExpertEncoder(mesh);
enc.SetAttributeQuantization(pid, 14); enc.SetAttributeQuantization(tid, bits);
enc.SetEncodingMethod(m.MESH_EDGEBREAKER_ENCODING);
enc.SetSpeedOptions(5,5);
const out = new m.DracoInt8Array(); const len = enc.EncodeToDracoBuffer(false, out);
const bytes = new Int8Array(len); for (let i=0;i<len;i++) bytes[i]=out.GetValue(i);
const dec = new d.Decoder(); const buf = new d.DecoderBuffer(); buf.Init(bytes, len);
const dm = new d.Mesh(); dec.DecodeBufferToMesh(buf, dm);
const ta = dec.GetAttributeByUniqueId(dm, tid); const arr = new d.DracoFloat32Array(); dec.GetAttributeFloatForAllPoints(dm, ta, arr);
let wbad=0, maxerr=0; const ws=new Set();
for (let i=0;i<dm.num_points();i++){ const w=arr.GetValue(4*i+3); ws.add(w); if (w!==1 && w!==-1) wbad++; }
console.log(bits, 'len', len, 'points', dm.num_points(), 'w values', [...ws].slice(0,5), 'bad', wbad);
}
