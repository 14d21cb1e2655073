/** Shown beside harmonised results (the harmonise form, a harmonised version, the timeline's reform mark). */
export { AREAL_WEIGHTING_CAUTION } from "@/lib/runs/cautions";
