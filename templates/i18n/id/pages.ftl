# Pesan halaman-halaman server (lihat en/pages.ftl).

## Tata letak
menu-main = Utama
menu-events = Kejadian
menu-import = Impor
menu-trips = Perjalanan
menu-station = Unggah di stasiun
menu-dashboard = Dasbor
menu-disputes = Perselisihan
signed-in-as = Masuk sebagai
log-out = Keluar
not-signed-in = Belum masuk
language-switch = Bahasa
language-switch-button = Ganti

## Peringatan keselamatan
footer-safety-title = Utamakan keselamatan
footer-safety-approach = Jangan mendekati pembukaan lahan yang sedang berlangsung, alat berat, atau orang bersenjata.
footer-safety-approach-more = Amati dari jarak aman, catat yang bisa dicatat, lalu pergi. "Tidak tercapai: keselamatan" adalah laporan yang baik.
footer-safety-protocol = Ikuti protokol keselamatan organisasi Anda dan hukum setempat (izin, akses lahan, rencana perjalanan, jam lapor).
footer-safety-consent = Foto orang memerlukan persetujuan mereka. Foto lahannya, bukan orangnya.
footer-safety-evidence = Bukti untuk perkara hukum mengikuti aturan setempat dan praktik tenaga berizin. Groundproof menyimpan foto tanpa diubah dan dikenali dari isinya, tetapi bukan sistem lacak balak (chain of custody).
footer-safety-sensitive = Paket dan kiriman balik berisi lokasi kegiatan yang mungkin ilegal: perlakukan sebagai rahasia.

## Masuk
login-title = Masuk
login-intro = Masuk untuk menindaklanjuti peringatan deforestasi.
login-name = Nama pengguna
login-password = Kata sandi
login-button = Masuk
login-note = Kerja lapangan bisa berbahaya: jangan mendekati kegiatan yang sedang berlangsung atau orang bersenjata, dan ikuti protokol keselamatan organisasi Anda serta hukum setempat.
login-bad-credentials = Nama pengguna dan kata sandi itu tidak cocok.
login-locked = Terlalu banyak percobaan gagal: tunggu 15 menit lalu coba lagi.
login-failed = Gagal masuk; lihat log server.
login-session-ended = Sesi Anda sudah berakhir (waktunya habis, atau Anda keluar di tempat lain). Masuk lagi; kiriman terakhir Anda tidak tersimpan.

## Halaman galat
error-back = Kembali ke halaman sebelumnya, atau ke
error-start-page = halaman awal

## Impor
import-title = Impor
import-nothing = Tidak ada yang diimpor
import-imported-as = { $file } diimpor sebagai { $source }
import-rows-read = baris dibaca
import-alerts = peringatan diimpor
import-duplicates = duplikat dibuang
import-skipped = baris tidak sah dilewati
import-events-created = kejadian dibuat
import-events-grown = kejadian diperluas
import-events-merged = kejadian digabung
import-skipped-rows = Baris yang dilewati
import-warnings = Peringatan
import-see-events = Lihat kejadian
import-zones-done = Zona diimpor
import-zones-summary = Zona: { $zones }. Kejadian yang dikaitkan lagi ke zonanya: { $relinked }.
import-alert-file = Berkas peringatan
import-alert-hint = CSV (baris judul, koma atau titik koma) atau titik GeoJSON. Paling banyak { $limit }. Berkas yang berisi kesalahan apa pun tidak mengimpor apa-apa, kecuali Anda melewati baris yang tidak sah.
import-no-source = Belum ada sumber peringatan yang terdaftar. Daftarkan satu dulu:
import-registered = Terdaftar: { $sizes }.
import-source = Sumber
import-choose = pilih…
import-format = Format
import-format-auto = kenali dari berkasnya
import-threshold = Ambang keyakinan
import-threshold-hint = (hanya keyakinan berupa angka)
import-file = Berkas
import-skip-invalid = Lewati baris tidak sah (impor yang sah dan daftar sisanya)
import-alerts-button = Impor peringatan
import-zone-file = Berkas zona
import-zone-hint = FeatureCollection GeoJSON berisi fitur Polygon atau MultiPolygon dengan teks "name" dan, bila perlu, boolean "priority". Zona dengan nama yang sudah tersimpan diganti. Paling banyak { $limit }.
import-zones-button = Impor zona

## Memasangkan ponsel
pair-page-title = Pasangkan ponsel
pair-page-bundle = Paket { $id } untuk { $team }, batas { $due }.
pair-another = Kode lain
pair-back = Kembali ke perjalanan
pair-back-trip = Kembali ke perjalanan ini
pairing-title = Pasang perjalanan ini di ponsel
pairing-qr-label = Kode QR yang membuka aplikasi lapangan dengan perjalanan ini
pairing-scan = Di ponsel tim, pindai kode dengan kamera, atau buka aplikasi lapangan lalu ketik kode ini:
pairing-open-app = Buka aplikasi lapangan
pairing-once = Kode ini berlaku sekali, untuk satu ponsel, sampai { $expires }. Buat kode lain untuk setiap ponsel. Ponsel itu lalu berisi lokasi kegiatan yang mungkin ilegal: perlakukan sebagai rahasia.

# --- station, station entry, report cards, field sheet ---
sheet-title = Lembar lapangan
sheet-safety-title = Utamakan keselamatan
sheet-safety-approach = Jangan mendekati kegiatan yang sedang berjalan (alat berat, penebangan, pembakaran, tambang) atau orang bersenjata. Jika bertemu, pergilah dengan tenang; tidak ada foto atau catatan yang sebanding dengan risikonya.
sheet-safety-protocol = Selalu ikuti protokol keselamatan organisasi Anda dan hukum setempat.
sheet-safety-consent = Foto orang memerlukan persetujuan mereka. Tanpa persetujuan, potret tanahnya, bukan orangnya.
sheet-safety-evidence = Penanganan bukti untuk perkara hukum mengikuti aturan setempat dan praktik berizin. Laporan dan foto Anda adalah pengamatan lapangan; yang meneruskannya sebagai bukti adalah orang yang berwenang.
sheet-sensitive = Rahasia:
sheet-sensitive-text = lembar ini menunjukkan tempat kegiatan yang mungkin ilegal. Simpan pada Anda, jangan dibagikan, dan musnahkan setelah perjalanan.
sheet-team = Tim
sheet-sheet = Lembar
sheet-bundle = Paket
sheet-issued = Diterbitkan
sheet-back-by = Kembali sebelum
sheet-expires = Kedaluwarsa
sheet-kind = Jenis
sheet-mode-response = tanggapan
sheet-mode-assessment = penilaian
sheet-seed = benih sampel { $seed }
sheet-checklist = Daftar periksa
sheet-checklist-version = versi { $version }
sheet-stops = Titik singgah
sheet-stops-count = { $events } kejadian, { $controls } titik kontrol
sheet-paper-help = Dengan lembar ini dan kamera: di setiap titik, centang hasilnya, tulis posisi yang diamati, waktunya, nomor foto yang diambil di sana dan siapa yang mengamati; stasiun memasukkan lembar ini bersama foto dari kamera (lembar { $sheet }).
sheet-assessment = Perjalanan penilaian:
sheet-assessment-text = kunjungi setiap titik, juga yang tampak biasa saja; melewatkan titik membuat hasilnya bias.
sheet-route-title = Awal dan rute
sheet-start = Awal: { $name }
sheet-stop = Titik
sheet-code = Kode
sheet-leg = Jarak ruas (km)
sheet-total = Total
sheet-straight = Jarak ruas adalah garis lurus antar titik, bukan jarak berjalan kaki.
sheet-legend = Keterangan peta
sheet-legend-pixels = piksel peringatan dari { $source }
sheet-legend-footprint = garis abu-abu: area kejadian
sheet-legend-cross = silang hitam: titik tujuan (pusat)
sheet-events = Kejadian ({ $n })
sheet-stop-n = Titik { $n }
sheet-corroborated = dikuatkan sumber lain
sheet-area = Luas
sheet-detected = Terdeteksi
sheet-dates = { $first } sampai { $last }
sheet-sources = Sumber
sheet-stratum = Strata
sheet-preview-alt = Pratinjau { $code }: area, piksel peringatan, pusat, panah utara dan skala
sheet-no-preview = Tidak ada pratinjau.
sheet-north = Utara di atas; silang hitam: pusat.
sheet-outcome = Hasil
sheet-if-false-alarm = Jika peringatan palsu
sheet-if-not-reached = Jika tidak tercapai
sheet-if-confirmed-cause = Jika terbukti, penyebab
sheet-photos-taken = foto diambil (min { $min })
sheet-position-recorded = posisi dicatat
sheet-notes = Catatan:
sheet-controls = Titik kontrol ({ $n })
sheet-controls-help = Tidak ada peringatan di sini: cari pembukaan lahan yang mungkin terlewat oleh peringatan dan laporkan yang Anda lihat.
sheet-gps-name = Di perangkat GPS:
sheet-if-clearing-cause = Jika ada pembukaan lahan, penyebab
sheet-if-clearing-area = Jika ada pembukaan lahan, perkiraan luas:
sheet-pos-dd = Lat, lon (DD, WGS 84)
sheet-pos-utm = UTM (meter, dipotong: kotak 1 m tempat titik berada)
sheet-pos-mgrs = MGRS (1 m, dipotong seperti UTM)
sheet-zone = zona
sheet-hemisphere-north = utara
sheet-hemisphere-south = selatan
sheet-outside-utm = di luar pita UTM
sheet-outside-mgrs = di luar pita UTM/MGRS
sheet-observed-position = Posisi diamati (lat, lon)
sheet-date-time = Tanggal dan jam (lokal)
sheet-photo-numbers = Nomor foto
sheet-observer = Pengamat
