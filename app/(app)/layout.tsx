import { Providers } from "@/components/providers";

export default function AppGroupLayout({ children }: { children: React.ReactNode }) {
  return <Providers>{children}</Providers>;
}
