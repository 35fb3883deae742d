// What an alarm e-mail says, validated where it enters (queueAlarmMail) and where it leaves the
// queue (the sender reads it back from jsonb). Alarm data is copied into the queue row on purpose:
// the message must read the same even if the alarm changes later, and the queue holds no foreign
// key into the control-chart tables.
import { z } from 'zod';

export const SUSPECTS = ['tester', 'product', 'lot'] as const;

export const AlarmMailSchema = z.object({
	alarmId: z.number().int().positive(),
	rule: z.string().min(1).max(40),
	ruleDescription: z.string().max(500),
	chart: z.string().min(1).max(200),
	stationName: z.string().min(1).max(200),
	lineId: z.number().int().positive().nullable(),
	lineName: z.string().max(200).nullable(),
	productId: z.number().int().positive(),
	productCode: z.string().min(1).max(100),
	lotNumber: z.string().max(100).nullable(),
	suspect: z.enum(SUSPECTS).nullable(),
	reasoning: z.string().max(4000),
	openedAt: z.iso.datetime({ offset: true }),
	url: z.url({ protocol: /^https?$/ })
});

export type AlarmMail = {
	alarmId: number;
	rule: string;
	ruleDescription: string;
	chart: string;
	stationName: string;
	lineId: number | null;
	lineName: string | null;
	productId: number;
	productCode: string;
	lotNumber: string | null;
	suspect: 'tester' | 'product' | 'lot' | null;
	reasoning: string;
	openedAt: string;
	url: string;
};

/** A queue row's payload: the alarms of one message, in the order they opened. */
export const MailPayloadSchema = z.object({ alarms: z.array(AlarmMailSchema).min(1) });
export type MailPayload = { alarms: AlarmMail[] };

/** The digest choices offered on the account page, in minutes; 0 = one e-mail per alarm. */
export const DIGEST_MINUTES = [0, 5, 15, 60] as const;
export type DigestMinutes = (typeof DIGEST_MINUTES)[number];

// The hand-written type above is the interface callers see; this fails to compile if the schema drifts from it.
type Same<A, B> = [A] extends [B] ? ([B] extends [A] ? true : false) : false;
const schemaMatchesType: Same<z.infer<typeof AlarmMailSchema>, AlarmMail> = true;
void schemaMatchesType;
