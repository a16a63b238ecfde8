/**
 * The most common passwords, refused at sign-up, invitation acceptance and password reset.
 *
 * Compiled from memory of the widely published "most common passwords" lists drawn from public
 * breach corpora (the kind OWASP ASVS 2.1.7 and NIST SP 800-63B §5.1.1.2 ask a service to check
 * new passwords against). Only entries of 8 characters or more can ever reach this check (shorter
 * ones fail the length rule first), so the list concentrates on those, plus obvious variants
 * built from this product's own vocabulary. Comparison ignores case.
 */
export const COMMON_PASSWORDS: readonly string[] = [
  "12345678", "123456789", "1234567890", "12345678910", "123123123", "123456123", "1234512345", "11111111",
  "111111111", "1111111111", "00000000", "000000000", "0000000000", "22222222", "55555555", "66666666",
  "77777777", "88888888", "99999999", "87654321", "987654321", "0987654321", "12121212", "13131313",
  "11223344", "112233445566", "123321123", "1q2w3e4r", "1q2w3e4r5t", "1q2w3e4r5t6y", "1qaz2wsx", "1qaz2wsx3edc",
  "zaq12wsx", "zaq1zaq1", "zaq1xsw2", "q1w2e3r4", "q1w2e3r4t5", "q1w2e3r4t5y6", "a1b2c3d4", "a1s2d3f4",
  "abcd1234", "abcdefgh", "abcdefg1", "abc12345", "abc123456", "abcabc123", "aaaaaaaa", "asdfasdf",
  "asdfghjk", "asdfghjkl", "asdf1234", "asdfgh123", "qwertyui", "qwertyuiop", "qwerty12", "qwerty123",
  "qwerty1234", "qwerty12345", "qwert12345", "qwertyu1", "qazwsxedc", "qazwsx123", "zxcvbnm1", "zxcvbnm123",
  "zxcvbnma", "1234qwer", "1234abcd", "12qwaszx", "password", "password1", "password12", "password123",
  "password1234", "password!", "password1!", "passw0rd", "p@ssword", "p@ssw0rd", "p@ssw0rd1", "pa55word",
  "pa55w0rd", "passpass", "passport", "password01", "mypassword", "newpassword", "secretpassword", "letmein1",
  "letmein123", "letmeinnow", "welcome1", "welcome12", "welcome123", "welcome2024", "welcome2025", "welcome!",
  "iloveyou", "iloveyou1", "iloveyou2", "iloveyou!", "iloveu123", "loveyou1", "lovelove", "loveme123",
  "sunshine", "sunshine1", "princess", "princess1", "football", "football1", "baseball", "baseball1",
  "basketball", "superman", "superman1", "batman123", "spiderman", "starwars", "starwars1", "pokemon1",
  "michelle", "jennifer", "jonathan", "jordan23", "michael1", "christian", "victoria", "samantha",
  "elizabeth", "alexander", "charlie1", "trustno1", "whatever", "whatever1", "computer", "computer1",
  "internet", "changeme", "changeme1", "changeme123", "default1", "administrator", "admin123", "admin1234",
  "adminadmin", "administrator1", "rootroot", "root1234", "toor1234", "guest123", "testtest", "test1234",
  "test12345", "testing1", "testing123", "tester123", "demo1234", "user1234", "username", "login123",
  "master12", "masterkey", "mastermind", "monkey12", "monkey123", "dragon12", "dragon123", "shadow12",
  "shadow123", "killer12", "freedom1", "liverpool", "chelsea1", "arsenal1", "manchester", "barcelona",
  "midnight", "blink182", "metallica", "nirvana1", "ncc1701d", "thx11388", "aa123456", "aa12345678",
  "a12345678", "a123456789", "qq123456", "zz123456", "1a2b3c4d", "abcd12345", "987654321a", "q1234567",
  "11qq22ww", "1qazxsw2", "qwe12345", "qweasdzxc", "qweqweqwe", "asdasdasd", "zxczxczxc", "123qweasd",
  "123qweasdzxc", "1234567a", "12345678a", "12345qwert", "123456qwerty", "qwerty123456", "azertyuiop", "azerty123",
  "qwertzuiop", "iloveyou123", "999999999", "123654789", "147258369", "159357456", "741852963", "789456123",
  "147852369", "963852741", "456789123", "789789789", "456456456", "147147147", "20202020", "19841984",
  "19851985", "19861986", "19871987", "19881988", "19891989", "19901990", "19911991", "19921992",
  "20002000", "20012001", "01012000", "01011990", "12341234", "43214321", "44444444", "33333333",
  "summer2024", "summer2025", "winter2024", "winter2025", "spring2025", "autumn2025", "january1", "september",
  "november", "december", "football123", "soccer123", "hockey123", "hunter12", "hunter123", "access14",
  "mustang1", "corvette", "ferrari1", "porsche911", "mercedes", "harley01", "yamaha123", "cowboys1",
  "steelers", "eagles12", "redskins", "packers1", "yankees1", "lakers24", "mickeymouse", "hellokitty",
  "butterfly", "chocolate", "cookie123", "cupcake1", "pepper12", "flower12", "sweetheart", "beautiful",
  "angel123", "blessed1", "jesus123", "jesuschrist", "godisgood", "heaven12", "forever1", "together",
  "happy123", "happiness", "friends1", "family123", "mother12", "daddy123", "babygirl", "babygirl1",
  "peanut12", "biteme12", "fuckyou1", "fuckoff1", "asshole1", "blowjob1", "booboo12", "bigdaddy",
  "1234567q", "1password", "password2", "password3", "password9", "password11", "password2024", "password2025",
  "qwerty2024", "qwerty2025", "admin2024", "admin2025", "company1", "company123", "office123", "workshop",
  "workshop1", "garage123", "mechanic", "mechanic1", "autoshop", "carrepair", "service1", "service123",
  "engine123", "ignition", "ignition1", "sparkplug", "sparkplug1", "misfire1", "waveform", "oscilloscope",
  "scope1234", "burnline", "burnline1", "burnline123", "burnline2025", "burnline!", "diagnostic", "diagnostics",
];

const SET = new Set(COMMON_PASSWORDS.map((p) => p.toLowerCase()));

/** True when the password is on the common list (case-insensitive). */
export function isCommonPassword(password: string): boolean {
  return SET.has(password.toLowerCase());
}
