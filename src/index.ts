/**
 * tanframe's library API (the `tanframe` entry, without the command line: that is
 * `tanframe/cli`; `computeFrames` alone, with no Node.js imports, is `tanframe/frames`).
 * `computeFrames` is the stable contract (DESIGN.md); the file-level functions are the same
 * ones the CLI uses. Every type an exported signature names is exported here too.
 */
export { computeFrames } from './frames/computeFrames.js';
export type { FrameInput, FrameOptions, FrameResult, FrameStats, FrameMethod, TangentWeight, UvOrigin } from './mesh/types.js';
export { TanframeError, type ErrorCode } from './mesh/errors.js';
export type { Asset, AttributeData, ComponentArray, ExternalImage, MeshoptViewRecord, PrimitiveData, PrimitiveReplacement } from './mesh/asset.js';
export type { UvTransform } from './mesh/uvTransform.js';
export { readAsset, readAssetBytes, processFile, processFileOutcome, outputFormat, type FileJob, type FileOutcome } from './lib/processFile.js';
export { solveAsset, solvePrimitive, type AssetSolve, type SolvedSurface } from './lib/bakeAsset.js';
export { attachBackgrounds, normalMapBackground, type BackgroundCache, type BackgroundResult, type JpegDecode } from './lib/pictureBackground.js';
export { renderViewSheets, type ViewSheet, type ViewWants } from './lib/viewSheets.js';
export { createCompactScratch, type CompactScratch } from './mesh/compact.js';
export { defaultProcessOptions, GATE_NAMES, COMPRESSION_MODES, type CompressionMode, type GateLimit, type GateName, type ProcessOptions } from './lib/options.js';
export { planCompression, compressionIn, DRACO_DEFAULT_BITS, type CompressionKind, type CompressionPlan, type PrimitiveCompression } from './lib/compression.js';
export { trippedGates, gateFigures, parseLimit, parseLimitValue, DEFAULT_LIMITS, GATE_INFO, type GateCount, type GateInfo } from './lib/gates.js';
export { checkConfig, settingsFor, waiversFor, CONFIG_SCHEMA, type Config, type ConfigSettings } from './lib/config.js';
export { readGltf, readGltfBytes } from './io/gltfRead.js';
export { readObj, readObjBytes } from './io/objRead.js';
export type { ReadLimits } from './io/limits.js';
export type { AssetResources, ResourceSource } from './io/resources.js';
export type { ResolvedResource } from './io/uri.js';
export { encodeGltf, type EncodeOptions, type WriteCompression, type DracoPrimitive, type MeshoptPrimitive } from './io/gltfWrite.js';
export type { MeshoptEncoders } from './io/meshopt.js';
export { writeFilesAtomic, type AssetWriteOptions, type OutputFile } from './io/files.js';
export type { JobWrites } from './lib/writePlan.js';
export { expandInputs, globMatcher, type DiscoveryOptions, type ExpandedInputs, type InputFile } from './io/inputs.js';
export { STATE_FILE_NAME, type HashedFile, type RecordParts } from './lib/runState.js';
export { type Stamp } from './lib/stampCache.js';
export { buildReport, summarize } from './report/json.js';
export { renderSummary, type SummaryStyle } from './report/summary.js';
export { renderJunit } from './report/junit.js';
export { renderHtml, type HtmlPicture, type HtmlView } from './report/html.js';
export { renderUvMapSvg, pictureFileName, type UvMapSvgOptions } from './report/uvMapSvg.js';
export type { PictureBackground, UvPicture } from './report/uvPicture.js';
export type { Report, FileReport, GateFigure, PrimitiveReport, ReportSummary, StoredTangentReport, TriangleFinding, VertexFindingReport } from './report/types.js';
export { decodePng, encodePng, detectImageKind, type PngImage, type ImageKind } from './imaging/png.js';
export { rasterizeTriangle, createSpanBuffer, countCoverage, type SpanBuffer, type CoverageStats } from './imaging/rasterize.js';
export {
  convertNormalMap, flipGreen, type ConvertMapOptions, type ConvertMapStats, type FrameSet, type MapPart, type MapSpace, type GreenDirection,
} from './imaging/convert.js';
export { mapPartsForAsset, primitiveFrameSet, type MapParts, type MapPartsRequest, type MapPrimitiveInfo, type PrimitiveRef } from './lib/mapFrames.js';
export {
  renderSheet, countFindings, sceneBounds, VIEW_NAMES, MODE_NAMES, FINDING_KINDS,
  type RenderScene, type RenderPrimitive, type RenderInstance, type RenderMaterial, type RenderImage, type RenderTextureRef,
  type RenderedSheet, type SheetOptions, type ViewName, type ModeName,
} from './render/index.js';
export { buildRenderScene, renderAssetPng, defaultRenderOptions, type BuiltScene, type RenderAssetOptions, type RenderedAsset } from './lib/renderAsset.js';
