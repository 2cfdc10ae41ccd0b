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

  const customerLines: string[] = ['customer_id,birth_date,region,channel,customer_type'];
  const streams = contactsCsvs.map((campaign) => ({ stream: fs.openSync(campaign.file, 'w'), buffer: 'customer_id,contacted_at,converted,revenue\n' }));
  drawBenchData(options, {
    customer: (customer) => customerLines.push(`C${customer.index + 1},${customer.birthDate},${customer.region},${customer.channel},${customer.customerType}`),
    contact: (contact) => {
      const output = streams[contact.campaignIndex] as { stream: number; buffer: string };
      output.buffer += `C${contact.customerIndex + 1},${contact.contactedAt},${contact.converted ? 1 : 0},${contact.revenue}\n`;
      if (output.buffer.length > 1 << 20) {
        fs.writeSync(output.stream, output.buffer);
        output.buffer = '';
      }
    },
  });
  fs.writeFileSync(customersCsv, customerLines.join('\n') + '\n');
  for (const output of streams) {
    fs.writeSync(output.stream, output.buffer);
    fs.closeSync(output.stream);
  }
  return files;
}

export interface BenchCustomer {
  index: number;
  /** ISO date, or '' when unknown */
  birthDate: string;
  region: string;
  channel: string;
  customerType: 'individual' | 'company';
}

export interface BenchContact {
  campaignIndex: number;
  customerIndex: number;
  contactedAt: string;
  converted: boolean;
  /** as written in the CSV: money with two decimals, or 0 */
  revenue: string;
}

/**
 * Draws the benchmark's customers, then each campaign's contacts, in the one seeded order the
 * CSV files are written in, so code that needs the same data without files (bench/build-input.ts)
 * sees exactly what an upload of the files stores.
 */
export function drawBenchData(
  options: { customers: number; campaigns: number; contactsPerCampaign: number; seed: number },
  visit: { customer(customer: BenchCustomer): void; contact(contact: BenchContact): void },
): void {
  const random = seededRandom(options.seed);
  for (let index = 0; index < options.customers; index++) {
    const birthDate = random() < 0.03 ? '' : new Date(Date.UTC(1945 + Math.floor(random() * 60), 0, 1 + Math.floor(random() * 365))).toISOString().slice(0, 10);
    const region = DEMO_REGIONS[Math.floor(random() * DEMO_REGIONS.length)] as string;
    const channel = DEMO_CHANNELS[Math.floor(random() * DEMO_CHANNELS.length)] as string;
    visit.customer({ index, birthDate, region, channel, customerType: random() < 0.9 ? 'individual' : 'company' });
  }
  const rows = Math.min(options.contactsPerCampaign, options.customers);
  for (let campaignIndex = 0; campaignIndex < options.campaigns; campaignIndex++) {
    const contactedAt = `2026-0${(campaignIndex % 9) + 1}-15`;
    // A contiguous block of customers per campaign, so every row has a distinct customer.
    const offset = (campaignIndex * rows) % options.customers;
    for (let row = 0; row < rows; row++) {
      const converted = random() < 0.12;
      visit.contact({ campaignIndex, customerIndex: (offset + row) % options.customers, contactedAt, converted, revenue: converted ? (10 + random() * 90).toFixed(2) : '0' });
    }
  }
}
