import { z } from 'zod';
import { emailField } from './auth';
import { optionalText } from './fields';

/** A dealer organisation as the admin enters it: the name is unique, the address receives shipment notices. */
export const dealerSchema = z.object({
	name: z
		.string()
		.trim()
		.min(2, 'Enter the dealer’s name.')
		.max(120, 'Use at most 120 characters.'),
	contactEmail: emailField('Enter the address shipment notices go to.'),
	region: optionalText(120, 'Use at most 120 characters for the region.')
});
export type DealerInput = z.infer<typeof dealerSchema>;
