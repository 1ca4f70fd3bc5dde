import { z } from 'zod';

/**
 * Why a setting or threshold was changed, in the lead's own words: kept with the change and shown wherever the
 * change is (settings history, audit, period reports), so a reviewer reads who, when and why together. Optional
 * at the API (scripts and older clients send none, and the report then says none was given); the screens ask.
 */
export const changeReasonSchema = z.string().trim().min(1, 'Say why, or leave the reason out.').max(1000);
