/**
 * Invented benchmark data, deterministic from a seed: customers and the contacts of one or
 * more campaigns, written as CSV files the way an analyst would upload them.
 */
import fs from 'node:fs';
import path from 'node:path';
import { DEMO_CHANNELS, DEMO_REGIONS, seededRandom } from '../seed/generate.js';

export interface BenchFiles {
  customersCsv: string;
  contactsCsvs: Array<{ campaignId: string; file: string; rows: number }>;
  customers: number;
  contacts: number;
}

/** Writes `customers` customers and `contactsPerCampaign` contacts for each of `campaigns` campaigns. */
export function writeBenchFiles(directory: string, options: { customers: number; campaigns: number; contactsPerCampaign: number; seed: number }): BenchFiles {
  fs.mkdirSync(directory, { recursive: true });
  const tag = `${options.customers}-${options.campaigns}x${options.contactsPerCampaign}-${options.seed}`;
  const customersCsv = path.join(directory, `customers-${tag}.csv`);
  const contactsCsvs = Array.from({ length: options.campaigns }, (_, index) => ({
    campaignId: `bench-campaign-${index + 1}`,
    file: path.join(directory, `contacts-${tag}-${index + 1}.csv`),
    rows: Math.min(options.contactsPerCampaign, options.customers),
  }));
  const files = { customersCsv, contactsCsvs, customers: options.customers, contacts: contactsCsvs.reduce((sum, item) => sum + item.rows, 0) };
  if (fs.existsSync(customersCsv) && contactsCsvs.every((item) => fs.existsSync(item.file))) return files;

  const random = seededRandom(options.seed);
  const birthDates: string[] = [];
  const customerLines: string[] = ['customer_id,birth_date,region,channel,customer_type'];
  for (let index = 0; index < options.customers; index++) {
    const birthDate = random() < 0.03 ? '' : new Date(Date.UTC(1945 + Math.floor(random() * 60), 0, 1 + Math.floor(random() * 365))).toISOString().slice(0, 10);
    birthDates.push(birthDate);
    const region = DEMO_REGIONS[Math.floor(random() * DEMO_REGIONS.length)];
    const channel = DEMO_CHANNELS[Math.floor(random() * DEMO_CHANNELS.length)];
    customerLines.push(`C${index + 1},${birthDate},${region},${channel},${random() < 0.9 ? 'individual' : 'company'}`);
  }
  fs.writeFileSync(customersCsv, customerLines.join('\n') + '\n');

  contactsCsvs.forEach((campaign, campaignIndex) => {
    const contactedAt = `2026-0${(campaignIndex % 9) + 1}-15`;
    const stream = fs.openSync(campaign.file, 'w');
    let buffer = 'customer_id,contacted_at,converted,revenue\n';
    // A contiguous block of customers per campaign, so every row has a distinct customer.
    const offset = (campaignIndex * campaign.rows) % options.customers;
    for (let row = 0; row < campaign.rows; row++) {
      const customer = (offset + row) % options.customers;
      const converted = random() < 0.12;
      buffer += `C${customer + 1},${contactedAt},${converted ? 1 : 0},${converted ? (10 + random() * 90).toFixed(2) : 0}\n`;
      if (buffer.length > 1 << 20) {
        fs.writeSync(stream, buffer);
        buffer = '';
      }
    }
    fs.writeSync(stream, buffer);
    fs.closeSync(stream);
  });
  return files;
}
